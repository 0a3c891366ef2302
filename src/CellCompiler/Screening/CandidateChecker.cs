using System.Text.Json;
using System.Diagnostics;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Graph;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Prediction;
using CellCompiler.Runtime;
using CellCompiler.Shapes;

namespace CellCompiler.Screening;

/// <summary>
/// Screens one candidate in memory: compile, run on ONNX Runtime's CPU provider (smoke test),
/// optionally measure latency, and judge the budgets. Nothing is written to disk. With a cache,
/// an equivalent genotype (equal hash) checked before under the same settings is answered from it.
/// Time and memory are bounded: a network of more than <see cref="CheckOptions.MaxRunNodes"/> nodes
/// or whose run would not fit in the <see cref="MemoryGuard"/> is compiled but not run.
/// With a latency table every candidate that compiles gets a predicted latency, before it is run (units the table
/// lacks are measured first, with the machine to themselves); in static mode nothing is run on ONNX
/// Runtime and the compile draws no weights.
/// Thread-safe: one checker serves all workers of a run.
/// </summary>
public sealed class CandidateChecker(CheckOptions options, IResultCache? cache = null, ExclusiveGate? gate = null, MemoryGuard? memory = null,
    LatencyPredictor? predictor = null)
{
    /// <summary>Kind of the reasons of candidates not run because of this machine's limits.</summary>
    public const string TooLargeKind = "too large to run here";

    /// <summary>Bytes a compile holds per primitive op of the expanded network (graph, shapes, names), measured with headroom.</summary>
    private const long CompileBytesPerOp = 16_000;

    private readonly ExclusiveGate _gate = gate ?? ExclusiveGate.None;
    private readonly MemoryGuard _memory = memory ?? MemoryGuard.Unbounded;
    private readonly LatencyPredictor? _predictor = predictor ?? OpenPredictor(options);
    private readonly string _settingsKey =
        $"{options.Skeleton.ToJson()}|seed={options.Compile.Seed}|opset={options.Compile.Opset}|tool={ToolBuild}";

    /// <summary>Identifies this build of the compiler, so that a cache never answers with another build's results.</summary>
    public static readonly string ToolBuild = typeof(CandidateChecker).Assembly.ManifestModule.ModuleVersionId.ToString("N");

    public CheckOptions Options => options;

    /// <summary>The predictor of <see cref="CheckOptions.LatencyTablePath"/>, refused unless made under this run's conditions.</summary>
    public static LatencyPredictor? OpenPredictor(CheckOptions options, Action<string>? warning = null) =>
        options.LatencyTablePath is { } path
            ? LatencyPredictor.Open(path, TableConditions.Here(options.PredictionThreads, options.Compile.Opset), warning)
            : null;

    /// <summary>Checks one candidate without a cache or a gate.</summary>
    public static CheckRecord Check(Candidate candidate, CheckOptions options) => new CandidateChecker(options).Check(candidate);

    public CheckRecord Check(Candidate candidate)
    {
        var clock = Stopwatch.StartNew();
        if (candidate.Genotype is not { } genotype)
            return Failed(candidate, null, CheckStatus.Invalid, candidate.Error!.OneLine, "invalid: " + Kind(candidate.Error.Problem), [], clock);

        // The prediction comes first, so that a candidate over --max-predicted-latency-ms is not run.
        var liveness = Liveness.Analyse(genotype);
        var (predicted, predictionFailure) = Predict(genotype, liveness);

        // Everything but the latency measurements is shared work; a measurement waits until none runs.
        var (hashes, warnings, notes, evaluation, cached, model, latencyKey) = _gate.Shared(() => Prepare(genotype, liveness, predicted));
        if (!evaluation.Works)
            return Failed(candidate, hashes, evaluation.Failure!.Value, evaluation.FailureReason!, evaluation.FailureKind, warnings, clock, cached) with
            {
                Notes = notes,
                // A network that compiled has a prediction even when it failed on ONNX Runtime.
                LatencyPredictedMs = evaluation.Figures is null ? null : predicted,
            };
        if (predictionFailure is not null)
            return Failed(candidate, hashes, CheckStatus.Broken,
                $"latency prediction failed: {predictionFailure.ReplaceLineEndings(" ")}",
                "latency prediction failed", warnings, clock, cached) with { Notes = notes };

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
                    latency = _gate.Exclusive(() => LatencyMeter.Measure(bytes, settings)).Rounded();
                }
                catch (Exception e) when (e is not OutOfMemoryException)
                {
                    return Failed(candidate, hashes, CheckStatus.Broken,
                        $"latency measurement failed: {e.Message.ReplaceLineEndings(" ")}", "latency measurement failed", warnings, clock);
                }
                cache?.StoreLatency(latencyKey, latency);
            }
        }

        var (status, reason, kind) = Judge(figures, trainMemory, latency, options, predicted);
        if (!evaluation.SmokeTested && !options.Static)
        {
            // Not run: either already over a budget, or too large for this machine (the one budget the user did not set).
            var why = evaluation.FailureReason ?? "not run on ONNX Runtime (already over budget)";
            (status, reason, kind) = status == CheckStatus.Ok
                ? (CheckStatus.OverBudget, why, TooLargeKind)
                : (status, $"{reason}; {why}", kind);
        }
        return new CheckRecord
        {
            Id = candidate.Id,
            Name = genotype.Name,
            Hash = hashes.Hash,
            NetworkHash = hashes.NetworkHash,
            Status = status,
            Reason = reason,
            ReasonKind = kind,
            OutputShape = evaluation.OutputShape,
            Params = figures.Params,
            Buffers = figures.Buffers,
            Macs = figures.Macs,
            PeakActivationBytes = figures.PeakActivationBytes,
            Ops = figures.OpCounts,
            Warnings = warnings,
            Notes = notes,
            SmokeTested = evaluation.SmokeTested,
            OnnxBytes = evaluation.OnnxBytes,
            TrainMemoryBytes = trainMemory,
            LatencyMs = latency?.AtBatch(1)?.P50Ms,
            Latency = latency,
            LatencyPredictedMs = predicted,
            Cached = cached,
            CheckMs = Math.Round(clock.Elapsed.TotalMilliseconds, 4),
            Meta = MetaOf(candidate),
            Budgets = RecordedBudgets,
        };
    }

    /// <summary>The run's budgets as records carry them: null when none was set.</summary>
    private Budgets? RecordedBudgets => options.Budgets == Budgets.None ? null : options.Budgets;

    private sealed record Prepared(GenotypeHashes Hashes, IReadOnlyList<string> Warnings, IReadOnlyList<string> Notes, Evaluation Evaluation, bool Cached, byte[]? Model, string? LatencyKey);

    /// <summary>
    /// The predicted latency of a live cell when there is a table, measuring the units it lacks first
    /// (with the machine to themselves, as a latency measurement). A failed measurement is returned,
    /// not thrown: a candidate that does not compile reports that instead. The units of a live cell
    /// that then fails to compile are measured all the same (a known cost: the table keeps them).
    /// </summary>
    private (double? Predicted, string? Failure) Predict(Genotype genotype, Liveness liveness)
    {
        if (_predictor is null || !liveness.Cell(genotype).OutputIsLive) return (null, null);
        try
        {
            // Counting walks the whole cell: shared work, kept out of other workers' latency measurements.
            var units = _gate.Shared(() => _predictor.Count(genotype, liveness, options.Skeleton));
            var missing = _predictor.Missing(units);
            if (missing.Count > 0) _gate.Exclusive(() => { _predictor.MeasureMissing(missing, options.Skeleton); return 0; });
            return (_predictor.Sum(units), null);
        }
        catch (Exception e) when (e is not OutOfMemoryException)
        {
            return (null, e.Message);
        }
    }

    /// <summary>The candidate's `meta` object as written (the reader kept it as compact JSON text).</summary>
    private static JsonElement? MetaOf(Candidate candidate)
    {
        if (candidate.Genotype?.Meta is not { } meta) return null;
        using var document = JsonDocument.Parse(meta);
        return document.RootElement.Clone();
    }

    /// <summary>
    /// Hash, cache look-up, compile and smoke test; and when latency is to be measured and is not in
    /// the cache, the model bytes for it, compiled here so that no compile overlaps a measurement.
    /// </summary>
    private Prepared Prepare(Genotype genotype, Liveness liveness, double? predicted)
    {
        var hashes = GenotypeHasher.Hashes(genotype, liveness, options.Skeleton.Merge);
        var warnings = Lowerer.Warnings(genotype, liveness);
        IReadOnlyList<string> notes = liveness.Cell(genotype).OutputIsLive && !Lowerer.HasTrainableOp(genotype, liveness)
            ? [Lowerer.TrivialCellNote] : [];
        // The network hash is the key: the settings hold the skeleton and so its merge mode, and under
        // sum merges genotypes that differ only by nesting of sums are the same network.
        var key = $"{hashes.NetworkHash}|{_settingsKey}";

        byte[]? model = null;
        Evaluation? evaluation = null;
        var found = cache?.FindEvaluation(key);
        if (found?.Figures is null) found = null; // entries without figures are not trusted
        if (options.Static)
        {
            // Static checks only read the cache: a static evaluation is cheaper to make again than to store.
            // Another spelling's entry keeps its verdict, but its figures are recounted for this spelling.
            if (found is not null && found.Spelling != SpellingOf(genotype))
            {
                var own = EvaluateStatic(genotype, hashes);
                found = own.Figures is null ? own : found with { Figures = own.Figures, ActivationBytesPerSample = own.ActivationBytesPerSample, OnnxBytes = null };
            }
            // A cached network still needs its structure to fit here, as a fresh static compile would.
            var result = (found is null ? null : CompileRefusal(genotype, null)) ?? found ?? EvaluateStatic(genotype, hashes);
            return new Prepared(hashes, warnings, notes, result, found is not null, null, null);
        }
        var spelling = SpellingOf(genotype);
        if (found is not null && found.Spelling != spelling)
        {
            // Another spelling of the same network filled the cache: its run verdict holds, but the file
            // size and the peak activation follow the spelling, so this one is compiled (not run).
            var (compiled, compiledModel) = Compile(genotype, hashes);
            found = compiled.Figures is null ? null : found with
            {
                Figures = compiled.Figures,
                ActivationBytesPerSample = compiled.ActivationBytesPerSample,
                OnnxBytes = compiled.OnnxBytes,
                Spelling = spelling,
            };
            model = compiledModel?.OnnxBytes;
        }
        if (found is not null)
        {
            // Budgets and limits are judged afresh on this spelling's figures, exactly as a run without the cache would.
            if (NotRun(genotype, found, predicted) is { } notRun) evaluation = notRun;
            else if (found.SmokeTested) evaluation = found;
        }
        var cached = evaluation is not null;
        if (evaluation is null)
        {
            (evaluation, model) = Evaluate(genotype, hashes, predicted);
            evaluation = evaluation with { Spelling = spelling };
            // Only networks that compiled are cached: a compile failure's reason names this spelling's
            // own JSON paths (every dead cell has the same hash), and finding it again is cheap.
            if (evaluation.Figures is not null) cache?.StoreEvaluation(key, evaluation);
        }

        string? latencyKey = null;
        if (evaluation.Works && evaluation.SmokeTested && options.EffectiveLatency is { } settings)
        {
            latencyKey = $"{key}|{LatencyKey(settings)}";
            if (cache?.FindLatency(latencyKey) is null && model is null)
            {
                var (again, compiled) = Compile(genotype, hashes);
                if (compiled is not null) model = compiled.OnnxBytes;
                // NotRun above refuses a cached network whose compile does not fit, so this is a safeguard.
                else (evaluation, latencyKey) = (again with { Spelling = spelling }, null);
            }
        }
        return new Prepared(hashes, warnings, notes, evaluation, cached, model, latencyKey);
    }

    /// <summary>Identifies a genotype's exact spelling: the text its model records (names, order, declarations).</summary>
    private static string SpellingOf(Genotype genotype) =>
        Convert.ToHexString(SHA256.HashData(Encoding.UTF8.GetBytes(Compiler.RecordedGenotype(genotype))));

    private long TrainMemory(Evaluation evaluation) =>
        TrainingMemory.EstimateBytes(evaluation.ActivationBytesPerSample!.Value, evaluation.Figures!.Params, evaluation.Figures.Buffers, options.TrainBatch);

    /// <summary>
    /// The evaluation of a compiled network that this run does not execute: over a budget that needs
    /// no run, the predicted latency's included (unless --run-over-budget), or too large for this
    /// machine. Null when it runs.
    /// </summary>
    private Evaluation? NotRun(Genotype genotype, Evaluation compiled, double? predicted)
    {
        // A cached verdict from a run with more memory: judged as a compile here would be, so that the
        // record is the same with or without the cache.
        if (CompileRefusal(genotype, compiled.Figures) is { } refused)
            return refused.Failure is not null ? refused : compiled with { Failure = null, FailureReason = refused.FailureReason, FailureKind = null, SmokeTested = false, OnnxBytes = null };
        var notRun = compiled with { Failure = null, FailureReason = null, FailureKind = null, SmokeTested = false };
        if (!options.RunOverBudget && Judge(compiled.Figures!, TrainMemory(compiled), null, options, predicted).Item1 != CheckStatus.Ok)
            return notRun;
        return TooLargeToRun(compiled.Figures!) is { } tooLarge ? notRun with { FailureReason = tooLarge } : null;
    }

    /// <summary>Memory to run at batch 2 (the smoke test's), estimated by <see cref="RunNeeds.Estimate"/>.</summary>
    public static long RunEstimate(NetworkFigures figures)
    {
        var nodes = figures.OpCounts.Values.Sum(n => (long)n);
        var needed = RunNeeds.Estimate(figures.WeightBytes, (Int128)figures.PeakActivationBytes * 2, nodes);
        return needed > long.MaxValue ? long.MaxValue : (long)needed;
    }

    /// <summary>Memory a compile holds, estimated before compiling from the expanded network's op count.</summary>
    private long CompileEstimate(Genotype genotype) => Math.Min(ExpandedOps(genotype), Limits.MaxExpandedPrimitiveOps + 1) * CompileBytesPerOp;

    /// <summary>Primitive ops of the whole expanded network (the op limit's count; may exceed it).</summary>
    private long ExpandedOps(Genotype genotype) => ExpansionSize.CellPrimitiveOps(genotype) * options.Skeleton.Stages.Sum(s => (long)s.Cells);

    /// <summary>Why a compiled network is not run here: too many nodes or MACs, or more memory than this run may use.</summary>
    private string? TooLargeToRun(NetworkFigures figures)
    {
        var nodes = figures.OpCounts.Values.Sum(n => (long)n);
        if (nodes > options.MaxRunNodes)
            return $"not run on ONNX Runtime: the network has {nodes:N0} nodes, more than the {options.MaxRunNodes:N0} a check runs (--max-run-nodes)";
        if (figures.Macs > options.MaxRunMacs)
            return $"not run on ONNX Runtime: the network has {figures.Macs:N0} MACs per sample, more than the {options.MaxRunMacs:N0} a check runs (--max-run-macs)";
        var needed = RunEstimate(figures);
        return needed > _memory.CapacityBytes
            ? $"not run on ONNX Runtime: it needs about {Gigabytes(needed)} GB, more than the {Gigabytes(_memory.CapacityBytes)} GB this run may use (--memory-limit-gb)"
            : null;
    }

    private static string Gigabytes(long bytes) => Wording.Significant(bytes / 1e9);

    /// <summary>Compile and smoke-test: the cacheable part of a check.</summary>
    private (Evaluation, byte[]?) Evaluate(Genotype genotype, GenotypeHashes hashes, double? predicted)
    {
        var (compiled, model) = Compile(genotype, hashes);
        if (model is null) return (compiled, null);
        // Budgets that need no run are judged first: a candidate already over one is not run at all
        // unless the user asks for it.
        if (NotRun(genotype, compiled, predicted) is { } notRun) return (notRun, model.OnnxBytes);
        SmokeVerdict verdict;
        using (_memory.Reserve(RunEstimate(model.Figures)))
            verdict = SmokeTest.Run(model.OnnxBytes, model.InputShape.Dims, model.OutputShape.Dims, options.Compile.Seed,
                // Beyond about eleven days a limit means none (and timers cannot hold much more).
                options.MaxRunSeconds < 1e6 ? TimeSpan.FromSeconds(options.MaxRunSeconds) : null);
        // Stopped at the time limit: nothing is known of the model, as for a network too large to run.
        if (verdict.OutOfTime)
            return (compiled with { FailureReason = $"{verdict.Problem} (--max-run-seconds)" }, model.OnnxBytes);
        var evaluation = compiled with
        {
            Failure = verdict.Works ? null : CheckStatus.Broken,
            FailureReason = verdict.Problem,
            FailureKind = verdict.Works ? null : verdict.Kind,
            SmokeTested = true,
        };
        return (evaluation, model.OnnxBytes);
    }

    /// <summary>Compile without weights or ONNX bytes, and count: all a static check needs (failures as in <see cref="Compile"/>).</summary>
    private Evaluation EvaluateStatic(Genotype genotype, GenotypeHashes hashes)
    {
        var (figures, failure) = CompileFigures(genotype, hashes);
        return failure ?? Counted(figures!, onnxBytes: null, reason: null);
    }

    /// <summary>
    /// The compile alone: figures (not run yet), or why the network cannot be formed. Both halves run
    /// under the memory guard, one after the other (never nested, so workers cannot wait on each
    /// other): the structure by its op count first, then the structure and the weights, whose bytes
    /// the figures give. Weights that would not fit are never drawn: the network is counted, without
    /// a model, and reported too large to run here.
    /// </summary>
    private (Evaluation, CompiledModel?) Compile(Genotype genotype, GenotypeHashes hashes)
    {
        var (figures, failure) = CompileFigures(genotype, hashes);
        if (failure is not null) return (failure, null);
        if (CompileRefusal(genotype, figures!.Figures) is { } refused)
            return (Counted(figures, onnxBytes: null, refused.FailureReason), null);
        CompiledModel model;
        using (_memory.Reserve(CompileEstimate(genotype) + figures.Figures.WeightBytes))
        {
            try
            {
                model = Compiler.Emit(genotype, options.Skeleton, figures);
            }
            catch (CompileException e)
            {
                return (new Evaluation(CheckStatus.Invalid, e.Message, "invalid: cannot form the network", null, null, null, null), null);
            }
        }
        return (Counted(figures, model.OnnxBytes.LongLength, reason: null), model);
    }

    /// <summary>Lowering, shapes and figures under the memory guard; a failure is the evaluation to report.</summary>
    private (CompiledFigures?, Evaluation?) CompileFigures(Genotype genotype, GenotypeHashes hashes)
    {
        try
        {
            // The op limit first: a network over it is invalid on every machine, whatever its memory.
            Compiler.CheckExpandedSize(genotype, options.Skeleton);
            if (CompileRefusal(genotype, null) is { } refused) return (null, refused);
            using (_memory.Reserve(CompileEstimate(genotype)))
                return (Compiler.CompileFigures(genotype, options.Skeleton, options.Compile, hashes), null);
        }
        catch (DeadCellException dead)
        {
            return (null, new Evaluation(CheckStatus.Broken, dead.Message, "dead cell", null, null, null, null));
        }
        catch (CompileException e)
        {
            return (null, new Evaluation(CheckStatus.Invalid, e.Message, "invalid: cannot form the network", null, null, null, null));
        }
    }

    /// <summary>
    /// Why this run's memory cannot hold the compile: its structure (before the figures are known;
    /// null figures), or its structure and weights. An over_budget evaluation without figures for the
    /// first, a reason alone (Failure null) for the second; null when the compile fits.
    /// </summary>
    private Evaluation? CompileRefusal(Genotype genotype, NetworkFigures? figures)
    {
        var structure = CompileEstimate(genotype);
        if (structure > _memory.CapacityBytes)
            return new Evaluation(CheckStatus.OverBudget,
                $"not compiled: its {ExpandedOps(genotype):N0} primitive ops need about {Gigabytes(structure)} GB to compile, " +
                $"more than the {Gigabytes(_memory.CapacityBytes)} GB this run may use (--memory-limit-gb)",
                TooLargeKind, null, null, null, null, SmokeTested: false);
        if (figures is null) return null;
        var need = structure + figures.WeightBytes;
        return need > _memory.CapacityBytes
            ? new Evaluation(null,
                $"not compiled to ONNX: its weights and structure need about {Gigabytes(need)} GB, more than the {Gigabytes(_memory.CapacityBytes)} GB this run may use (--memory-limit-gb)",
                null, null, null, null, null, SmokeTested: false)
            : null;
    }

    /// <summary>A compiled network's evaluation before any run; a reason says why it is not run.</summary>
    private static Evaluation Counted(CompiledFigures figures, long? onnxBytes, string? reason) =>
        new(null, reason, null, figures.OutputShape.Dims, figures.Figures,
            TrainingMemory.ActivationBytesPerSample(figures.Network), onnxBytes, SmokeTested: false);

    private static string LatencyKey(LatencySettings s) =>
        $"cpu={MachineInfo.Processor}|ort={MachineInfo.RuntimeVersion}|threads={s.Threads}|batches={string.Join(",", s.BatchSizes)}|warmup={s.Warmup}|runs={s.Runs}|min={s.MinSeconds}";

    private CheckRecord Failed(Candidate candidate, GenotypeHashes? hashes, CheckStatus status, string reason, string? kind,
        IReadOnlyList<string> warnings, Stopwatch clock, bool cached = false) => new()
    {
        Id = candidate.Id,
        Name = candidate.Genotype?.Name,
        Hash = hashes?.Hash,
        NetworkHash = hashes?.NetworkHash,
        Status = status,
        Reason = reason,
        ReasonKind = kind,
        Warnings = warnings,
        Cached = cached,
        CheckMs = Math.Round(clock.Elapsed.TotalMilliseconds, 4),
        Meta = MetaOf(candidate),
        Budgets = RecordedBudgets,
    };

    /// <summary>The record of a candidate whose check failed in a way this tool did not foresee (a bug).</summary>
    public static CheckRecord InternalError(Candidate candidate, Exception e) => new()
    {
        Id = candidate.Id,
        Name = candidate.Genotype?.Name,
        Status = CheckStatus.Broken,
        Reason = $"internal error while checking ({e.GetType().Name}): {e.Message.ReplaceLineEndings(" ")}",
        ReasonKind = "internal error",
    };

    /// <summary>A problem's general kind, without the names and numbers of this instance (for summaries).</summary>
    private static string Kind(string problem)
    {
        // "malformed JSON at line 3, column 7: ..." is one kind whatever the position.
        var at = problem.IndexOf(" at line ", StringComparison.Ordinal);
        if (at > 0) problem = problem[..at];
        var cut = problem.IndexOfAny([':', '\'', '"', '(', '[', ';']);
        var text = cut > 0 ? problem[..cut] : problem;
        var kind = new string(text.Where(c => !char.IsDigit(c)).ToArray()).Trim();
        return kind.Length == 0 ? "other" : kind;
    }

    /// <summary>Every exceeded budget, named with the option that set it and by how much it is exceeded.</summary>
    public static (CheckStatus, string?, string?) Judge(NetworkFigures figures, long trainMemoryBytes, LatencyReport? latency, CheckOptions options,
        double? predictedMs = null)
    {
        var budgets = options.Budgets;
        var over = new List<string>();
        var kinds = new List<string>();
        void Compare(string what, double actual, double? limit, string option, string unit, bool count = false)
        {
            if (limit is not { } max || actual <= max) return;
            var (shownActual, shownMax) = count ? (Count(actual), Count(max)) : (Wording.Significant(actual), Wording.Significant(max));
            over.Add($"{what} {shownActual}{unit} exceeds {option} {shownMax}{unit} by {Wording.Significant(100 * (actual - max) / max)}%");
            kinds.Add("over " + option);
        }
        Compare("params", figures.Params, budgets.MaxParams, "--max-params", "", count: true);
        Compare("MACs", figures.Macs, budgets.MaxMacs, "--max-macs", "", count: true);
        Compare("peak activation memory", figures.PeakActivationBytes / 1e6, budgets.MaxActivationMB, "--max-activation-mb", " MB");
        Compare($"training memory estimate at batch {options.TrainBatch}", trainMemoryBytes / 1e9, budgets.MaxTrainMemoryGB, "--max-train-memory-gb", " GB");
        if (latency?.AtBatch(1) is { } atOne)
            Compare("latency p50 at batch 1", atOne.P50Ms, budgets.MaxLatencyMs, "--max-latency-ms", " ms");
        if (predictedMs is { } predicted)
            Compare("predicted latency at batch 1", predicted, budgets.MaxPredictedLatencyMs, "--max-predicted-latency-ms", " ms");
        return over.Count == 0
            ? (CheckStatus.Ok, null, null)
            : (CheckStatus.OverBudget, string.Join("; ", over), string.Join(", ", kinds));
    }

    /// <summary>A whole count with thousands separators (a budget of 5M reads "5,000,000").</summary>
    private static string Count(double value) => Math.Round(value).ToString("N0", CultureInfo.InvariantCulture);
}
