using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Onnx;
using CellCompiler.Shapes;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>
/// The small networks calibration times, laid through <see cref="LayerNetwork"/> with the kinds' own
/// lowering and <see cref="MacroLayers"/>, so that a probe holds exactly the layers (and hence the
/// kernels) a compiled network holds. A probe for a primitive or a merge is a chain: a conv1x1
/// prelude (so the chain starts on a tensor laid out as a conv leaves it, as a cell's input is) and
/// then the unit applied again and again at its site; timing chains of two lengths and dividing the
/// difference by the extra copies cancels everything outside the copies (prelude, reorders at the
/// ends, the run itself).
/// </summary>
public static class ProbeNetworks
{
    private static readonly PrimitiveDefinition Prelude = BuiltinPrimitives.Find(Primitives.Conv1x1)!;

    /// <summary>The input, a conv1x1 prelude and <paramref name="copies"/> applications of the primitive, each on the previous one's output.</summary>
    public static byte[] PrimitiveChain(PrimitiveUnit unit, int copies, int opset)
    {
        var layers = new LayerNetwork(unit.Site.AsInput, opset);
        var cell = NodePath.Cell(0, 0);
        var x = Prelude.Lower(layers.At(cell.Edge(0, "prelude"), unit.Site.Channels), layers.Input);
        for (var i = 1; i <= copies; i++)
            x = unit.Definition.Lower(layers.At(cell.Edge(i, "unit"), unit.Site.Channels), x);
        return Emit(layers.Finish(), opset);
    }

    /// <summary>
    /// The input, a conv1x1 prelude and <paramref name="steps"/> merges, each of the previous
    /// <see cref="MergeUnit.FanIn"/> results (the prelude's output standing in for results not made
    /// yet), so that from step FanIn on every merge reads that many distinct, recently made tensors,
    /// as a merge in a cell reads the results of its in-edges.
    /// </summary>
    public static byte[] MergeChain(MergeUnit unit, int steps, int opset)
    {
        var layers = new LayerNetwork(unit.Site.AsInput, opset);
        var cell = NodePath.Cell(0, 0);
        var start = Prelude.Lower(layers.At(cell.Edge(0, "prelude"), unit.Site.Channels), layers.Input);
        var made = new List<string>();
        var name = MacroLayers.MergeName(unit.Mode);
        for (var j = 1; j <= steps; j++)
        {
            var inputs = Enumerable.Range(1, unit.FanIn).Select(back => made.Count - back >= 0 ? made[made.Count - back] : start).ToList();
            made.Add(MacroLayers.Merge(layers.At(cell.Merge(j, name), unit.Site.Channels), unit.Mode, inputs));
        }
        return Emit(layers.Finish(), opset);
    }

    /// <summary>The anchor every probe is timed beside: <see cref="AnchorUnit.Copies"/> conv3x3 after the prelude at <see cref="AnchorUnit.At"/>.</summary>
    public static byte[] Anchor(int opset) =>
        PrimitiveChain(new PrimitiveUnit(BuiltinPrimitives.Find(Primitives.Conv3x3)!, AnchorUnit.At), AnchorUnit.Copies, opset);

    /// <summary>The skeleton without cells: stem, reductions, head (see <see cref="NetworkFrame"/>).</summary>
    public static byte[] Frame(Skeleton skeleton, int opset) => Emit(NetworkFrame.Build(skeleton, opset).Network, opset);

    private static byte[] Emit(Network network, int opset) =>
        OnnxEmitter.Emit(ShapeInference.Infer(network), new EmitOptions(0, opset, "latency-probe", []));
}
