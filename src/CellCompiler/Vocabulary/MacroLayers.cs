using CellCompiler.Input;

namespace CellCompiler.Vocabulary;

/// <summary>
/// The parts of a network around its cells (contract section 2) and the merge of a node's inputs
/// (contract section 3), written once against <see cref="ILayerSink{T}"/> like the primitives.
/// Each takes a sink already scoped to the part's path (stem, reduceT, head, the merge's path).
/// </summary>
public static class MacroLayers
{
    public const string Concat = "concat";
    public const string Sum = "sum";

    public static string MergeName(MergeMode mode) => mode switch
    {
        MergeMode.Concat => Concat,
        MergeMode.Sum => Sum,
        _ => throw new InvalidOperationException($"unknown merge mode {mode}"),
    };

    /// <summary>Conv 3x3 (stride s, pads 1) to the first stage's channels -> BN -> Relu, then MaxPool 3x3 stride 2 with `pool`.</summary>
    public static T Stem<T>(ILayerSink<T> sink, Skeleton skeleton, T images)
    {
        var x = sink.ConvBnAct(images, ConvLayer.Square(3, new ChannelSize.Fixed(skeleton.Stages[0].Channels), stride: skeleton.Stem.Stride), Activation.Relu);
        return skeleton.Stem.Pool ? sink.Pool(x, new PoolLayer(PoolKind.Max, 3, Stride: 2), "pool") : x;
    }

    /// <summary>The stride-2 reduction between two stages: sepconv3x3 (dw, pw, bn, relu) or conv3x3 (conv, bn, relu).</summary>
    public static T Reduction<T>(ILayerSink<T> sink, string op, int outChannels, T x)
    {
        var channels = new ChannelSize.Fixed(outChannels);
        switch (op)
        {
            case Primitives.SepConv3x3:
                x = sink.Conv(x, ConvLayer.DepthwiseSquare(3, stride: 2), "dw");
                x = sink.Conv(x, ConvLayer.Pointwise(channels), "pw");
                return sink.Activation(sink.BatchNorm(x, "bn"), Activation.Relu, "relu");
            case Primitives.Conv3x3:
                return sink.ConvBnAct(x, ConvLayer.Square(3, channels, stride: 2), Activation.Relu);
            default:
                throw new InvalidOperationException($"unknown reduction '{op}'");
        }
    }

    /// <summary>GlobalAveragePool -> Flatten -> Gemm to the classes.</summary>
    public static T Head<T>(ILayerSink<T> sink, int classes, T x) =>
        sink.Gemm(sink.Flatten(sink.GlobalAveragePool(x, "gap"), "flatten"), classes, "gemm");

    /// <summary>
    /// Two or more live inputs in order of their source node: concat = Concat (axis 1) -> Conv 1x1 to C
    /// -> BN -> Relu; sum = one Sum over all of them.
    /// </summary>
    public static T Merge<T>(ILayerSink<T> sink, MergeMode mode, IReadOnlyList<T> inputs) => mode switch
    {
        MergeMode.Concat => sink.ConvBnAct(sink.Concat(inputs, "cat"), ConvLayer.Pointwise(ChannelSize.Cell.Instance), Activation.Relu),
        MergeMode.Sum => sink.Sum(inputs, ""),
        _ => throw new InvalidOperationException($"unknown merge mode {mode}"),
    };
}
