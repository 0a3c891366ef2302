namespace CellCompiler.Vocabulary.Kinds;

/// <summary>`conv`: Conv k x k, dilation d (Cin -> C) -> BN -> A.</summary>
public sealed class ConvKind : PrimitiveKind
{
    public override string Name => "conv";
    public override KindFamily Family => KindFamily.Convolution;
    public override int MinKernel => 1;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } =
        new HashSet<PrimitiveParameter> { PrimitiveParameter.Kernel, PrimitiveParameter.Dilation, PrimitiveParameter.Act };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x) =>
        sink.ConvBnAct(x, ConvLayer.Square(d.Kernel, ChannelSize.Cell.Instance, d.Dilation), d.Act);
}
