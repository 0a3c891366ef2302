namespace CellCompiler.Vocabulary.Kinds;

/// <summary>
/// `sepconv`: [Conv k x k, dilation d, group Cin' (Cin' -> Cin') -> Conv 1x1 (Cin' -> C) -> BN -> A],
/// `repeat` times. The second round's layers are named dw2, pw2, bn2 and the activation's name + 2.
/// </summary>
public sealed class SepConvKind : PrimitiveKind
{
    public override string Name => "sepconv";
    public override KindFamily Family => KindFamily.Depthwise;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } =
        new HashSet<PrimitiveParameter> { PrimitiveParameter.Kernel, PrimitiveParameter.Dilation, PrimitiveParameter.Repeat, PrimitiveParameter.Act };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x)
    {
        for (var round = 1; round <= d.Repeat; round++)
        {
            var suffix = round == 1 ? "" : round.ToString(System.Globalization.CultureInfo.InvariantCulture);
            x = sink.Conv(x, ConvLayer.DepthwiseSquare(d.Kernel, d.Dilation), "dw" + suffix);
            x = sink.Conv(x, ConvLayer.Pointwise(ChannelSize.Cell.Instance), "pw" + suffix);
            x = sink.BatchNorm(x, "bn" + suffix);
            x = sink.Activation(x, d.Act, Activations.Name(d.Act) + suffix);
        }
        return x;
    }
}
