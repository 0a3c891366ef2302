using System.Collections.Concurrent;
using CellCompiler.Compilation;
using CellCompiler.Graph;
using CellCompiler.Input;

namespace CellCompiler.Spaces;

/// <summary>Params and MACs over live samples for one skeleton.</summary>
/// <param name="Measured">Live samples whose figures were counted.</param>
/// <param name="Failures">Live samples that could not be built for this skeleton (e.g. too large for the op limit), with the first reason.</param>
public sealed record FigureSummary(int Measured, int Failures, string? FirstFailure, Percentiles? Params, Percentiles? Macs);

/// <summary>
/// The cost figures of sampled genotypes through <see cref="Compiler.Figures"/>: the stages and bounds
/// of <c>compile</c> without emitting ONNX.
/// Samples of one network share its figures (params and MACs depend on the network only), so each
/// distinct network is counted once.
/// </summary>
public static class SpaceFigures
{
    /// <summary>Percentiles settle long before this many samples; more only costs time.</summary>
    public const int MaxMeasured = 10_000;

    private const int Chunk = 16;

    public static FigureSummary Measure(SearchSpace space, Skeleton skeleton, SpaceSample sample, int workers,
        Action<long>? progress = null, TimeSpan? interval = null)
    {
        var live = Enumerable.Range(0, sample.Count).Where(i => !sample.Dead[i]).Take(MaxMeasured).ToArray();
        var byNetwork = new ConcurrentDictionary<UInt128, Counted>();
        var results = new Counted[live.Length];
        ParallelWork.Run(live.Length, Chunk, workers,
            () => new SpaceCursor(space),
            (cursor, start, end) =>
            {
                for (var n = start; n < end; n++)
                {
                    var index = live[n];
                    var key = sample.Keys[index];
                    if (!byNetwork.TryGetValue(key, out var counted))
                    {
                        // Two workers may count one network at once; both get the same figures.
                        SpaceSampler.Seek(cursor, sample.Seed, index);
                        counted = byNetwork.GetOrAdd(key, Count(cursor.Current, skeleton));
                    }
                    results[n] = counted;
                }
            },
            _ => { }, progress, interval ?? TimeSpan.FromMilliseconds(250));

        var ok = results.Where(r => r.Failure is null).ToList();
        var failed = results.Where(r => r.Failure is not null).ToList();
        return new FigureSummary(ok.Count, failed.Count, failed.FirstOrDefault()?.Failure,
            Percentiles.Of(ok.Select(r => r.Params).ToList()), Percentiles.Of(ok.Select(r => r.Macs).ToList()));
    }

    private sealed record Counted(long Params, long Macs, string? Failure);

    private static Counted Count(Genotype genotype, Skeleton skeleton)
    {
        try
        {
            var figures = Compiler.Figures(genotype, skeleton);
            return new Counted(figures.Params, figures.Macs, null);
        }
        catch (CompileException e)
        {
            return new Counted(0, 0, e.Message);
        }
    }
}
