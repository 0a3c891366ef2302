using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Shapes;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>
/// A skeleton without its cells: the stem, the reductions between stages and the head, laid by the
/// same <see cref="MacroLayers"/> the lowerer uses, and the site of each stage (its channels and the
/// height x width its cells run at, from the ops' own shape rules). Every candidate on the skeleton
/// holds exactly this frame; only its cells differ.
/// </summary>
public sealed record NetworkFrame(Skeleton Skeleton, IReadOnlyList<Site> Stages, StemUnit Stem, IReadOnlyList<ReductionUnit> Reductions, HeadUnit Head)
{
    /// <summary>The skeleton as skeleton/1 JSON: what a table's <see cref="NetworkFit"/> was fitted for.</summary>
    public string SkeletonJson { get; } = Skeleton.ToJson();

    /// <summary>The units of the frame, in network order, with the per-run unit last.</summary>
    public IReadOnlyList<LatencyUnit> Units => [Stem, .. Reductions, Head, RunUnit.Instance];

    public static NetworkFrame Of(Skeleton skeleton)
    {
        var (network, stageInputs) = Build(skeleton, Onnx.OnnxVersions.DefaultOpset);
        var shaped = ShapeInference.Infer(network);
        var sites = stageInputs.Select(t => SiteOf(shaped, t)).ToList();
        var stem = new StemUnit(skeleton.Stem, skeleton.Input, skeleton.Stages[0].Channels);
        var reductions = Enumerable.Range(1, skeleton.Stages.Count - 1)
            .Select(t => new ReductionUnit(skeleton.Reduction, sites[t - 1], skeleton.Stages[t].Channels)).ToList();
        return new NetworkFrame(skeleton, sites, stem, reductions, new HeadUnit(sites[^1], skeleton.Classes));
    }

    /// <summary>
    /// The frame as a network (what calibration times), and the tensor each stage's cells would read.
    /// Node names are those of a compiled network (stem/..., reduceT/..., head/...).
    /// </summary>
    public static (Network Network, IReadOnlyList<string> StageInputs) Build(Skeleton skeleton, int opset)
    {
        var layers = new LayerNetwork(skeleton.Input, opset);
        var x = MacroLayers.Stem(layers.At(NodePath.Stem, skeleton.Stages[0].Channels), skeleton, layers.Input);
        var stageInputs = new List<string> { x };
        for (var t = 1; t < skeleton.Stages.Count; t++)
        {
            var channels = skeleton.Stages[t].Channels;
            x = MacroLayers.Reduction(layers.At(NodePath.Reduction(t - 1), channels), skeleton.Reduction, channels, x);
            stageInputs.Add(x);
        }
        MacroLayers.Head(layers.At(NodePath.Head, skeleton.Stages[^1].Channels), skeleton.Classes, x);
        return (layers.Finish(), stageInputs);
    }

    private static Site SiteOf(ShapedNetwork shaped, string tensor)
    {
        var shape = shaped[tensor];
        return new Site(shape.Channels, shape.Height, shape.Width);
    }
}
