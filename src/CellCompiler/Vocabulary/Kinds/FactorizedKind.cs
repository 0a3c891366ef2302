namespace CellCompiler.Vocabulary.Kinds;

/// <summary>`factorized`: Conv 1 x k, pads (0, p) (Cin -> C) -> Conv k x 1, pads (p, 0) (C -> C) -> BN -> A.</summary>
public sealed class FactorizedKind : PrimitiveKind
{
    public override string Name => "factorized";
    public override KindFamily Family => KindFamily.Factorized;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } =
        new HashSet<PrimitiveParameter> { PrimitiveParameter.Kernel, PrimitiveParameter.Act };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x)
    {
        x = sink.Conv(x, new ConvLayer(1, d.Kernel, ChannelSize.Cell.Instance), "row");
        x = sink.Conv(x, new ConvLayer(d.Kernel, 1, ChannelSize.Cell.Instance), "col");
        return sink.Activation(sink.BatchNorm(x, "bn"), d.Act, Activations.Name(d.Act));
    }
}
