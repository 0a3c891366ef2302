using System.Diagnostics;
using System.Globalization;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Hashing;
using CellCompiler.Lowering;
using CellCompiler.Runtime;
using CellCompiler.Shapes;

namespace CellCompiler.Screening;

/// <summary>
/// Screens one candidate in memory: compile, run on ONNX Runtime's CPU provider (smoke test),
/// compare with the budgets, optionally measure latency. Nothing is written to disk.
/// </summary>
public static class CandidateChecker
{
    public static CheckRecord Check(Candidate candidate, CheckOptions options)
    {
        var clock = Stopwatch.StartNew();
        if (candidate.Genotype is not { } genotype)
            return Record(candidate.Id, null, null, CheckStatus.Invalid, candidate.Error!.Message, clock);

        var hash = GenotypeHasher.Hash(genotype);
        CompiledModel model;
        try
        {
            model = Compiler.Compile(genotype, options.Skeleton, options.Compile);
        }
        catch (DeadCellException dead)
        {
            return Record(candidate.Id, genotype.Name, hash, CheckStatus.Broken, dead.Message, clock);
        }
        catch (CompileException e)
        {
            return Record(candidate.Id, genotype.Name, hash, CheckStatus.Invalid, e.Message, clock);
        }

        var trainMemory = TrainingMemory.EstimateBytes(model.Network, model.Figures, options.TrainBatch);
        var verdict = SmokeTest.Run(model.OnnxBytes, model.InputShape.Dims, model.OutputShape.Dims, options.Compile.Seed);
        LatencyReport? latency = null;
        if (verdict.Works && options.EffectiveLatency is { } settings)
            latency = LatencyMeter.Measure(model.OnnxBytes, settings);

        var (status, reason) = verdict.Works
            ? Judge(model.Figures, trainMemory, latency, options)
            : (CheckStatus.Broken, verdict.Problem);
        return new CheckRecord(candidate.Id, genotype.Name, hash, status, reason, model.OutputShape.Dims, model.Figures,
            trainMemory, model.OnnxBytes.LongLength, model.Warnings, latency, clock.Elapsed.TotalMilliseconds);
    }

    private static CheckRecord Record(string id, string? name, string? hash, CheckStatus status, string reason, Stopwatch clock) =>
        new(id, name, hash, status, reason, null, null, null, null, [], null, clock.Elapsed.TotalMilliseconds);

    /// <summary>Every exceeded budget, named with the option that set it and by how much it is exceeded.</summary>
    public static (CheckStatus, string?) Judge(NetworkFigures figures, long trainMemoryBytes, LatencyReport? latency, CheckOptions options)
    {
        var budgets = options.Budgets;
        var over = new List<string>();
        void Compare(string what, double actual, double? limit, string option, string unit)
        {
            if (limit is { } max && actual > max)
                over.Add($"{what} {Format(actual)}{unit} exceeds {option} {Format(max)}{unit} by {Format(100 * (actual - max) / max)}%");
        }
        Compare("params", figures.Params, budgets.MaxParams, "--max-params", "");
        Compare("MACs", figures.Macs, budgets.MaxMacs, "--max-macs", "");
        Compare("peak activation memory", figures.PeakActivationBytes / 1e6, budgets.MaxActivationMB, "--max-activation-mb", " MB");
        Compare($"training memory estimate at batch {options.TrainBatch}", trainMemoryBytes / 1e9, budgets.MaxTrainMemoryGB, "--max-train-memory-gb", " GB");
        if (latency?.AtBatch(1) is { } atOne)
            Compare("latency p50 at batch 1", atOne.P50Ms, budgets.MaxLatencyMs, "--max-latency-ms", " ms");
        return over.Count == 0 ? (CheckStatus.Ok, null) : (CheckStatus.OverBudget, string.Join("; ", over));
    }

    /// <summary>Readable, and never rounds a small budget down to 0.</summary>
    private static string Format(double value) => value switch
    {
        >= 1000 => value.ToString("N0", CultureInfo.InvariantCulture),
        >= 10 => value.ToString("0.#", CultureInfo.InvariantCulture),
        >= 1 => value.ToString("0.###", CultureInfo.InvariantCulture),
        _ => value.ToString("G3", CultureInfo.InvariantCulture),
    };
}
