using System.Globalization;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Hashing;

/// <summary>
/// Expands a genotype's primitives (built-in and declared) into their layers for the hash, through
/// the same <see cref="PrimitiveKind.Lower{T}"/> the compiler uses, so a primitive is known by what
/// it computes, never by its name: two definitions that lower to the same layers hash the same (a
/// sepconv with repeat 2 and two chained sepconvs; an mbconv with expand 1 and no squeeze-excitation
/// and a dwconv followed by a 1x1 conv without activation), and any difference in a layer shows.
/// </summary>
public sealed class LayerExpander(PrimitiveTable primitives) : IPrimitiveExpander
{
    public int Expand(LayerGraph graph, string op, int input) =>
        op == Primitives.Identity ? input : primitives.Get(op).Lower(new HashLayers(graph), input);

    /// <summary>The merge exactly as the compiler lowers it (<see cref="MacroLayers.Merge{T}"/>).</summary>
    public int ConcatMerge(LayerGraph graph, IReadOnlyList<int> inputs) => MacroLayers.Merge(new HashLayers(graph), MergeMode.Concat, inputs);

    /// <summary>Each layer becomes one node whose label states everything that changes its computation.</summary>
    private sealed class HashLayers(LayerGraph graph) : ILayerSink<int>
    {
        public int Conv(int x, ConvLayer layer, string name) => graph.AddLayer(Label(layer), x);

        /// <summary>e.g. "conv 1x5 s1 d1 to C" or "conv 3x3 s1 d2 depthwise" (the output size symbolic, as ChannelSize prints it).</summary>
        private static string Label(ConvLayer l) => string.Create(CultureInfo.InvariantCulture,
            $"conv {l.KernelH}x{l.KernelW} s{l.Stride} d{l.Dilation} {(l.Depthwise ? "depthwise" : "to " + l.Out)}{(l.Bias ? " bias" : "")}");

        public int BatchNorm(int x, string name) => graph.AddLayer("bn", x);

        public int Activation(int x, Activation act, string name) =>
            act == Vocabulary.Activation.None ? x : graph.AddLayer(Activations.Name(act), x);

        public int Pool(int x, PoolLayer layer, string name) => graph.AddLayer(layer.Kind switch
        {
            PoolKind.Max => "maxpool",
            PoolKind.Average => "avgpool",
            _ => throw new InvalidOperationException($"unknown pool kind {layer.Kind}"),
        } + string.Create(CultureInfo.InvariantCulture, $" {layer.Kernel}x{layer.Kernel} s{layer.Stride}"), x);

        public int GlobalAveragePool(int x, string name) => graph.AddLayer("gap", x);
        public int Sigmoid(int x, string name) => graph.AddLayer("sigmoid", x);
        public int Mul(int x, int gate, string name) => graph.AddJoin("mul", [x, gate]);
        public int Concat(IReadOnlyList<int> parts, string name) => graph.AddJoin(CellExpansion.ConcatLabel, parts);
        public int Sum(IReadOnlyList<int> terms, string name) => graph.AddJoin(CellExpansion.SumLabel, terms);

        public int Flatten(int x, string name) => throw new InvalidOperationException("a flatten is not part of a cell");
        public int Gemm(int x, int outFeatures, string name) => throw new InvalidOperationException("a fully connected layer is not part of a cell");
    }
}
