using System.Diagnostics;
using System.Globalization;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Graph;
using CellCompiler.Hashing;
using CellCompiler.Lowering;
using CellCompiler.Runtime;
using CellCompiler.Shapes;

namespace CellCompiler.Screening;

/// <summary>
/// Screens one candidate in memory: compile, run on ONNX Runtime's CPU provider (smoke test),
/// optionally measure latency, and judge the budgets. Nothing is written to disk. With a cache,
/// an equivalent genotype (equal hash) checked before under the same settings is answered from it.
/// Thread-safe: one checker serves all workers of a run.
/// </summary>
public sealed class CandidateChecker(CheckOptions options, IResultCache? cache = null, ExclusiveGate? gate = null)
{
    private readonly ExclusiveGate _gate = gate ?? ExclusiveGate.None;
    private readonly string _settingsKey =
        $"{options.Skeleton.ToJson()}|seed={options.Compile.Seed}|opset={options.Compile.Opset}|tool={ToolBuild}";

    /// <summary>Identifies this build of the compiler, so that a cache never answers with another build's results.</summary>
    public static readonly string ToolBuild = typeof(CandidateChecker).Assembly.ManifestModule.ModuleVersionId.ToString("N");

    public CheckOptions Options => options;

    /// <summary>Checks one candidate without a cache or a gate.</summary>
    public static CheckRecord Check(Candidate candidate, CheckOptions options) => new CandidateChecker(options).Check(candidate);

    public CheckRecord Check(Candidate candidate)
    {
        var clock = Stopwatch.StartNew();
        if (candidate.Genotype is not { } genotype)
            return Failed(candidate.Id, null, null, CheckStatus.Invalid, candidate.Error!.Message, "invalid: " + Kind(candidate.Error.Problem), [], clock);

        // Everything but the latency measurement is shared work; the measurement waits until none runs.
        var prepared = _gate.Shared(() => Prepare(genotype));
        var (hash, warnings, evaluation, cached, model, latencyKey) = prepared;
        if (!evaluation.Works)
            return Failed(candidate.Id, genotype.Name, hash, evaluation.Failure!.Value, evaluation.FailureReason!, evaluation.FailureKind, warnings, clock, cached);

        var figures = evaluation.Figures!;
        var trainMemory = TrainMemory(evaluation);
        LatencyReport? latency = null;
        if (latencyKey is not null && options.EffectiveLatency is { } settings)
        {
            latency = cache?.FindLatency(latencyKey);
            if (latency is null)
            {
                cached = false;
                try
                {
                    var bytes = model!;
                    latency = _gate.Exclusive(() => LatencyMeter.Measure(bytes, settings));
                }
                catch (Exception e)
                {
                    return Failed(candidate.Id, genotype.Name, hash, CheckStatus.Broken,
                        $"latency measurement failed: {e.Message.ReplaceLineEndings(" ")}", "latency measurement failed", warnings, clock);
                }
                cache?.StoreLatency(latencyKey, latency);
            }
        }

        var (status, reason, kind) = Judge(figures, trainMemory, latency, options);
        if (!evaluation.SmokeTested)
        {
            // Not run: either already over a budget, or too large for this machine (the one budget the user did not set).
            var why = evaluation.FailureReason ?? "not run on ONNX Runtime (already over budget)";
            (status, reason, kind) = status == CheckStatus.Ok
                ? (CheckStatus.OverBudget, why, "too large to run here")
                : (status, $"{reason}; {why}", kind);
        }
        return new CheckRecord(candidate.Id, genotype.Name, hash, status, reason, evaluation.OutputShape, figures,
            trainMemory, evaluation.OnnxBytes, warnings, latency, clock.Elapsed.TotalMilliseconds, cached, kind);
    }

    private sealed record Prepared(string Hash, IReadOnlyList<string> Warnings, Evaluation Evaluation, bool Cached, byte[]? Model, string? LatencyKey);

    /// <summary>
    /// Hash, cache look-up, compile and smoke test; and when latency is to be measured and is not in
    /// the cache, the model bytes for it, compiled here so that no compile overlaps a measurement.
    /// </summary>
    private Prepared Prepare(Input.Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        var hash = GenotypeHasher.Hash(genotype, liveness);
        var warnings = Lowerer.Warnings(genotype, liveness);
        var key = $"{hash}|{_settingsKey}";

        byte[]? model = null;
        var evaluation = cache?.FindEvaluation(key);
        if (evaluation?.Figures is null) evaluation = null; // entries of older builds without figures are not trusted
        var cached = evaluation is not null;
        if (evaluation is null || (!evaluation.SmokeTested && !OverStaticBudget(evaluation)))
        {
            cached = false;
            (evaluation, model) = Evaluate(genotype, hash);
            // Only networks that compiled are cached: a compile failure's reason names this spelling's
            // own JSON paths (every dead cell has the same hash), and finding it again is cheap.
            if (evaluation.Figures is not null) cache?.StoreEvaluation(key, evaluation);
        }

        string? latencyKey = null;
        if (evaluation.Works && evaluation.SmokeTested && options.EffectiveLatency is { } settings)
        {
            latencyKey = $"{key}|{LatencyKey(settings)}";
            if (cache?.FindLatency(latencyKey) is null)
                model ??= Compiler.Compile(genotype, options.Skeleton, options.Compile, hash).OnnxBytes;
        }
        return new Prepared(hash, warnings, evaluation, cached, model, latencyKey);
    }

    private long TrainMemory(Evaluation evaluation) =>
        TrainingMemory.EstimateBytes(evaluation.ActivationBytesPerSample!.Value, evaluation.Figures!.Params, evaluation.Figures.Buffers, options.TrainBatch);

    private bool OverStaticBudget(Evaluation evaluation) =>
        Judge(evaluation.Figures!, TrainMemory(evaluation), null, options).Item1 != CheckStatus.Ok || TooLargeToRun(evaluation.Figures!) is not null;

    /// <summary>Rough memory to run at batch 2: the model bytes twice (ours and the runtime's) and two samples' activations twice over.</summary>
    private string? TooLargeToRun(NetworkFigures figures)
    {
        var needed = (Int128)figures.WeightBytes * 2 + (Int128)figures.PeakActivationBytes * 4;
        var limit = options.EffectiveRunMemoryLimit;
        return needed > limit
            ? $"not run on ONNX Runtime: it needs about {(double)needed / 1e9:0.##} GB, more than the {limit / 1e9:0.##} GB allowed here"
            : null;
    }

    /// <summary>Compile and smoke-test: the cacheable part of a check.</summary>
    private (Evaluation, byte[]?) Evaluate(Input.Genotype genotype, string hash)
    {
        CompiledModel model;
        try
        {
            model = Compiler.Compile(genotype, options.Skeleton, options.Compile, hash);
        }
        catch (DeadCellException dead)
        {
            return (new Evaluation(CheckStatus.Broken, dead.Message, "dead cell", null, null, null, null), null);
        }
        catch (CompileException e)
        {
            return (new Evaluation(CheckStatus.Invalid, e.Message, "invalid: cannot form the network", null, null, null, null), null);
        }
        var activation = TrainingMemory.ActivationBytesPerSample(model.Network);
        var compiled = new Evaluation(null, null, null, model.OutputShape.Dims, model.Figures, activation, model.OnnxBytes.LongLength, SmokeTested: false);
        // Budgets that need no run are judged first: a candidate already over one is not run at all.
        if (Judge(model.Figures, TrainMemory(compiled), null, options).Item1 != CheckStatus.Ok)
            return (compiled, model.OnnxBytes);
        if (TooLargeToRun(model.Figures) is { } tooLarge)
            return (compiled with { FailureReason = tooLarge }, model.OnnxBytes);
        var verdict = SmokeTest.Run(model.OnnxBytes, model.InputShape.Dims, model.OutputShape.Dims, options.Compile.Seed);
        var evaluation = compiled with
        {
            Failure = verdict.Works ? null : CheckStatus.Broken,
            FailureReason = verdict.Problem,
            FailureKind = verdict.Works ? null : verdict.Kind,
            SmokeTested = true,
        };
        return (evaluation, model.OnnxBytes);
    }

    private static string LatencyKey(LatencySettings s) =>
        $"cpu={MachineInfo.Processor}|ort={MachineInfo.RuntimeVersion}|threads={s.Threads}|batches={string.Join(",", s.BatchSizes)}|warmup={s.Warmup}|runs={s.Runs}|min={s.MinSeconds}";

    private static CheckRecord Failed(string id, string? name, string? hash, CheckStatus status, string reason, string? kind,
        IReadOnlyList<string> warnings, Stopwatch clock, bool cached = false) =>
        new(id, name, hash, status, reason, null, null, null, null, warnings, null, clock.Elapsed.TotalMilliseconds, cached, kind);

    /// <summary>A problem's general kind, without the names and numbers of this instance (for summaries).</summary>
    private static string Kind(string problem)
    {
        var cut = problem.IndexOfAny([':', '\'', '"', '(', '[']);
        var text = cut > 0 ? problem[..cut] : problem;
        return new string(text.Where(c => !char.IsDigit(c)).ToArray()).Trim();
    }

    /// <summary>Every exceeded budget, named with the option that set it and by how much it is exceeded.</summary>
    public static (CheckStatus, string?, string?) Judge(NetworkFigures figures, long trainMemoryBytes, LatencyReport? latency, CheckOptions options)
    {
        var budgets = options.Budgets;
        var over = new List<string>();
        var kinds = new List<string>();
        void Compare(string what, double actual, double? limit, string option, string unit)
        {
            if (limit is not { } max || actual <= max) return;
            over.Add($"{what} {Format(actual)}{unit} exceeds {option} {Format(max)}{unit} by {Format(100 * (actual - max) / max)}%");
            kinds.Add("over " + option);
        }
        Compare("params", figures.Params, budgets.MaxParams, "--max-params", "");
        Compare("MACs", figures.Macs, budgets.MaxMacs, "--max-macs", "");
        Compare("peak activation memory", figures.PeakActivationBytes / 1e6, budgets.MaxActivationMB, "--max-activation-mb", " MB");
        Compare($"training memory estimate at batch {options.TrainBatch}", trainMemoryBytes / 1e9, budgets.MaxTrainMemoryGB, "--max-train-memory-gb", " GB");
        if (latency?.AtBatch(1) is { } atOne)
            Compare("latency p50 at batch 1", atOne.P50Ms, budgets.MaxLatencyMs, "--max-latency-ms", " ms");
        return over.Count == 0
            ? (CheckStatus.Ok, null, null)
            : (CheckStatus.OverBudget, string.Join("; ", over), string.Join(", ", kinds));
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
