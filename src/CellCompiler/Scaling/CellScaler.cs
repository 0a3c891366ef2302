using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Runtime;

namespace CellCompiler.Scaling;

/// <summary>
/// Compiles one cell at several sizes (presets, files, width multipliers, cell counts) so that a
/// cell found on the proxy network can be costed at full size before a cluster is booked.
/// Models are handed out one at a time and not kept, so full-size targets do not pile up in memory.
/// </summary>
public static class CellScaler
{
    public static IReadOnlyList<ScaleRow> Run(
        Genotype genotype,
        IReadOnlyList<ScaleTarget> targets,
        CompileOptions options,
        int trainBatch,
        LatencySettings? latency,
        Action<ScaleTarget, CompiledModel>? onModel = null)
    {
        var liveness = Lowering.Liveness.Analyse(genotype);
        var byMerge = new Dictionary<MergeMode, Hashing.GenotypeHashes>();
        var rows = new List<ScaleRow>(targets.Count);
        foreach (var target in targets)
        {
            var merge = target.Skeleton.Merge;
            if (!byMerge.TryGetValue(merge, out var hashes))
                byMerge[merge] = hashes = Hashing.GenotypeHasher.Hashes(genotype, liveness, merge);
            var model = Compiler.Compile(genotype, target.Skeleton, options, hashes);
            onModel?.Invoke(target, model);
            var stats = latency is null ? null : LatencyMeter.Measure(model.OnnxBytes, latency with { Batches = [1] }).AtBatch(1);
            rows.Add(new ScaleRow(target, model.Figures.Params, model.Figures.Macs, model.Figures.PeakActivationBytes,
                TrainingMemory.EstimateBytes(model.Network, model.Figures, trainBatch), model.OnnxBytes.LongLength, stats));
        }
        return rows;
    }

    /// <summary>
    /// The cartesian product of base skeletons, width multipliers and cell counts (each cell count
    /// applied to every stage). A list left empty means "as the base skeleton has it".
    /// </summary>
    public static IReadOnlyList<ScaleTarget> Targets(
        IReadOnlyList<(string Label, Skeleton Skeleton)> bases,
        IReadOnlyList<double> widthMultipliers,
        IReadOnlyList<int> cellCounts,
        SkeletonOverrides common)
    {
        var targets = new List<ScaleTarget>();
        foreach (var (label, skeleton) in bases)
        foreach (var width in widthMultipliers.Count == 0 ? [double.NaN] : widthMultipliers.Select(w => w))
        foreach (var cells in cellCounts.Count == 0 ? [0] : cellCounts)
        {
            var overrides = common with
            {
                WidthMultiplier = double.IsNaN(width) ? common.WidthMultiplier : width,
                Cells = cells == 0 ? common.Cells : [cells],
            };
            var name = label
                       + (double.IsNaN(width) ? "" : $" w{width.ToString(System.Globalization.CultureInfo.InvariantCulture)}")
                       + (cells == 0 ? "" : $" c{cells}");
            targets.Add(new ScaleTarget(name, overrides.ApplyTo(skeleton)));
        }
        return targets;
    }
}
