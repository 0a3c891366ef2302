namespace CellCompiler.Vocabulary.Kinds;

/// <summary>`dwconv`: Conv k x k, dilation d, group Cin (Cin -> Cin) -> BN -> A.</summary>
public sealed class DwConvKind : PrimitiveKind
{
    public override string Name => "dwconv";
    public override KindFamily Family => KindFamily.Depthwise;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } =
        new HashSet<PrimitiveParameter> { PrimitiveParameter.Kernel, PrimitiveParameter.Dilation, PrimitiveParameter.Act };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x) =>
        sink.ConvBnAct(x, ConvLayer.DepthwiseSquare(d.Kernel, d.Dilation), d.Act);
}
