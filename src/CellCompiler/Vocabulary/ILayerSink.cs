namespace CellCompiler.Vocabulary;

/// <summary>
/// The layers a network is made of, as primitives, merges, the stem, reductions and the head
/// describe them. One lowering, written once against this interface, feeds every consumer: the
/// network builder (ONNX ops), the hash (a labelled layer graph) and code generators. T is the
/// consumer's handle for a tensor; names are relative to the consumer's current scope (empty: the
/// scope itself).
/// </summary>
public interface ILayerSink<T>
{
    T Conv(T x, ConvLayer layer, string name);
    T BatchNorm(T x, string name);

    /// <summary>The activation's output is named <paramref name="name"/>; helper nodes go below it; `none` returns x.</summary>
    T Activation(T x, Activation act, string name);

    T Pool(T x, PoolLayer layer, string name);
    T GlobalAveragePool(T x, string name);
    T Sigmoid(T x, string name);

    /// <summary>Elementwise product; <paramref name="gate"/> may be [C, 1, 1] and is broadcast.</summary>
    T Mul(T x, T gate, string name);

    T Concat(IReadOnlyList<T> parts, string name);
    T Sum(IReadOnlyList<T> terms, string name);
    T Flatten(T x, string name);
    T Gemm(T x, int outFeatures, string name);
}

/// <summary>Compound layers every lowering uses.</summary>
public static class LayerSinkExtensions
{
    /// <summary>Conv -> BatchNormalization -> activation, named scope+"conv", scope+"bn", scope+activation name+suffix.</summary>
    public static T ConvBnAct<T>(this ILayerSink<T> sink, T x, ConvLayer conv, Activation act, string scope = "", string suffix = "") =>
        sink.Activation(sink.BatchNorm(sink.Conv(x, conv, scope + "conv" + suffix), scope + "bn" + suffix), act, scope + Activations.Name(act) + suffix);
}
