using CellCompiler.Input;
using CellCompiler.Lowering;

namespace CellCompiler.Prediction;

/// <summary>
/// Every unit of one candidate on one skeleton, with how often the network holds it: the frame's
/// units once each, and each stage's cell census times the stage's cell count at the stage's site.
/// Counted from the genotype alone, without compiling it.
/// </summary>
/// <param name="SkeletonJson">The skeleton the units were counted for (a fit applies only to its own skeleton).</param>
public sealed record UnitCounts(IReadOnlyList<(LatencyUnit Unit, long Count)> Items, string SkeletonJson)
{
    public static UnitCounts Of(Genotype genotype, Liveness liveness, NetworkFrame frame)
    {
        var census = CellCensus.Of(genotype, liveness, frame.Skeleton.Merge);
        var items = new List<(LatencyUnit, long)>();
        foreach (var unit in frame.Units) items.Add((unit, 1));
        var skeleton = frame.Skeleton;
        for (var t = 0; t < skeleton.Stages.Count; t++)
        {
            var cells = skeleton.Stages[t].Cells;
            var site = frame.Stages[t];
            foreach (var (definition, n) in census.Primitives)
                items.Add((new PrimitiveUnit(definition, site), checked(n * cells)));
            foreach (var (fanIn, n) in census.Merges)
                items.Add((new MergeUnit(skeleton.Merge, fanIn, site), checked(n * cells)));
        }
        return new UnitCounts(items, frame.SkeletonJson);
    }
}
