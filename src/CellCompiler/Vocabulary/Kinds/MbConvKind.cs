namespace CellCompiler.Vocabulary.Kinds;

/// <summary>
/// `mbconv`, an inverted bottleneck (contract 3.1): E = expand * Cin. If expand > 1, Conv 1x1
/// (Cin -> E) -> BN -> A; then a depthwise Conv k x k (E -> E) -> BN -> A; if se > 0, a
/// squeeze-excitation gate with R = max(1, floor(Cin * se)): GlobalAveragePool -> Conv 1x1 with bias
/// (E -> R) -> A' -> Conv 1x1 with bias (R -> E) -> Sigmoid, multiplied into the depthwise output;
/// then Conv 1x1 (E -> C) -> BN with no activation (a linear bottleneck; a skip is an identity edge).
/// </summary>
public sealed class MbConvKind : PrimitiveKind
{
    public override string Name => "mbconv";
    public override KindFamily Family => KindFamily.Bottleneck;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } = new HashSet<PrimitiveParameter>
        { PrimitiveParameter.Kernel, PrimitiveParameter.Expand, PrimitiveParameter.Se, PrimitiveParameter.Act };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x)
    {
        var expanded = new ChannelSize.Expanded(d.Expand);
        if (d.Expand > 1)
            x = sink.ConvBnAct(x, ConvLayer.Pointwise(expanded), d.Act, "expand/");
        x = sink.ConvBnAct(x, ConvLayer.DepthwiseSquare(d.Kernel), d.Act, "dw/");
        if (d.Se > 0)
        {
            var inner = Activations.Inner(d.Act);
            var gate = sink.GlobalAveragePool(x, "se/gap");
            gate = sink.Conv(gate, ConvLayer.Pointwise(new ChannelSize.Squeezed(d.Se), bias: true), "se/reduce");
            gate = sink.Activation(gate, inner, "se/" + Activations.Name(inner));
            gate = sink.Conv(gate, ConvLayer.Pointwise(expanded, bias: true), "se/expand");
            gate = sink.Sigmoid(gate, "se/sigmoid");
            x = sink.Mul(x, gate, "se/mul");
        }
        return sink.BatchNorm(sink.Conv(x, ConvLayer.Pointwise(ChannelSize.Cell.Instance), "project/conv"), "project/bn");
    }
}
