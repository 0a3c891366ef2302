using System.Diagnostics;
using CellCompiler.Input;
using CellCompiler.Io;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>What a screening run is asked to do (the options of `cellc check`, already parsed).</summary>
public sealed record ScreeningRequest
{
    /// <summary>Files, folders of genotype files, or "-" for JSON Lines on standard input.</summary>
    public required IReadOnlyList<string> Inputs { get; init; }
    public required CheckOptions Options { get; init; }
    public int Jobs { get; init; } = Environment.ProcessorCount;
    /// <summary>Records in input order (default: in completion order).</summary>
    public bool Ordered { get; init; }
    public ShardSelector Shard { get; init; } = ShardSelector.All;
    /// <summary>The results file (JSON Lines); null: records go to the record stream given to the run, if any.</summary>
    public string? OutPath { get; init; }
    /// <summary>Continue the results file: keep its records and check only the candidates it lacks.</summary>
    public bool Resume { get; init; }
    /// <summary>Write OUT.settings beside the results (what --resume checks).</summary>
    public bool WriteSettings { get; init; } = true;
    /// <summary>The SQLite result cache; null: no cache.</summary>
    public string? CachePath { get; init; }
    /// <summary>Memory the candidates may use at once, all workers together.</summary>
    public long MemoryLimitBytes { get; init; } = MemoryGuard.DefaultCapacity;
}

/// <summary>Known before the first candidate: how many there are (when the inputs could be counted) and how many an earlier run did.</summary>
public sealed record ScreeningStart(long? Total, long Resumed, bool Single);

/// <summary>What the caller shows while a screening runs. Calls never overlap.</summary>
public interface IScreeningObserver
{
    void Started(ScreeningStart start);
    void Checked(CheckRecord record, ScreeningSummary summary);
    void Warning(string message);
}

/// <summary>How a run ended, for the exit code: every candidate ok, some not, or a single genotype file that is bad input.</summary>
public enum ScreeningVerdict { AllOk, SomeNotOk, BadSingleGenotype }

public sealed record ScreeningOutcome(ScreeningSummary Summary, ScreeningVerdict Verdict, bool Single, LatencyReport? AnyLatency, long RepeatedIds, TimeSpan Elapsed);

/// <summary>
/// One screening run, used by `cellc check` and `cellc demo`: reads the inputs (kind detection,
/// bounded readers), fingerprints them and checks a resumed results file against the fingerprint,
/// opens the cache, runs the candidates on parallel workers under one memory guard, writes each
/// record as soon as it is final, and sums them up. Bad input or options are an
/// <see cref="InputException"/> thrown before anything is written; a failing output is an
/// <see cref="IOException"/> or <see cref="OutputException"/>.
/// </summary>
public static class ScreeningSession
{
    public static ScreeningOutcome Run(ScreeningRequest request, IScreeningObserver observer, Func<Stream> stdin, Stream? recordStream = null)
    {
        var clock = Stopwatch.StartNew();
        if (request.Jobs is < 1 or > 256) throw Bad("--jobs", $"must be between 1 and 256, found {request.Jobs}");
        if (request.Resume && request.OutPath is null) throw Bad("--resume", "needs --out FILE: the records of the interrupted run");
        RequirePredictionOptions(request.Options);
        // The table is read (and refused under other conditions) before any file is touched.
        var predictor = CandidateChecker.OpenPredictor(request.Options, observer.Warning);

        var source = CandidateSource.Open(request.Inputs, stdin);
        if (request.OutPath is { } outPath) RequireOutsideInputs(outPath, request.Inputs, source);
        InputScan? scan = source.Rereadable ? source.Scan(request.Shard) : null;
        if (request.Resume)
        {
            if (scan is null)
                throw Bad("--resume", "needs the population in files: standard input and pipes cannot be compared with the earlier run");
            if (scan.FirstRepeat is { } repeat)
                throw new InputException(repeat.Again.File, "",
                    $"the id '{repeat.Id}' at {repeat.Again} was already used at {repeat.First}: --resume matches records by id, " +
                    "so it cannot continue a population whose ids repeat; give every candidate its own id");
        }
        var settings = ScreeningSettings.Of(scan?.Inputs ?? [new InputFingerprint("-", null, 0)], request.Options, request.Shard);

        var summary = new ScreeningSummary();
        HashSet<string> done = [];
        ResultLog? log = null;
        using var cache = request.CachePath is null ? null : SqliteResultCache.Open(request.CachePath, observer.Warning);
        try
        {
            if (request.OutPath is { } path)
            {
                try
                {
                    if (request.Resume)
                    {
                        if (request.WriteSettings) settings.RequireSameAs(path, ResultLog.HoldsRecords(path));
                        (log, done) = ResultLog.Resume(path, summary.AddPrevious, observer.Warning);
                    }
                    else
                    {
                        log = ResultLog.Create(path);
                    }
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    throw new InputException(path, "", $"cannot open the results file: {e.Message}");
                }
                // After the results file is emptied or continued, never before: records always follow their settings.
                if (request.WriteSettings) settings.Write(path);
            }
            else if (recordStream is not null)
            {
                log = ResultLog.ToStream(recordStream);
            }

            observer.Started(new ScreeningStart(scan?.InShard, summary.Resumed, source.Single));
            var badSingle = false;
            LatencyReport? anyLatency = null;
            using var gate = new ExclusiveGate();
            var checker = new CandidateChecker(request.Options, cache, gate, new MemoryGuard(request.MemoryLimitBytes), predictor);
            ScreeningRun.Execute(source.Read(observer.Warning),
                candidate => request.Shard.Contains(candidate.Id) && !done.Contains(candidate.Id),
                checker.Check,
                new RunSettings(request.Jobs, request.Ordered),
                record =>
                {
                    log?.Append(record);
                    summary.Add(record);
                    anyLatency ??= record.Latency;
                    badSingle |= source.Single && record.Status == CheckStatus.Invalid;
                    observer.Checked(record, summary);
                });
            // A single genotype file that cannot form a network is bad input, as for `compile`.
            var verdict = badSingle ? ScreeningVerdict.BadSingleGenotype : summary.AllOk ? ScreeningVerdict.AllOk : ScreeningVerdict.SomeNotOk;
            return new ScreeningOutcome(summary, verdict, source.Single, anyLatency, source.RepeatedIds, clock.Elapsed);
        }
        finally
        {
            log?.Dispose();
        }
    }

    /// <summary>Static checks run nothing, so they cannot measure; a budget on the prediction needs a table to predict from.</summary>
    private static void RequirePredictionOptions(CheckOptions options)
    {
        if (options.Static && options.EffectiveLatency is not null)
            throw Bad(options.Budgets.NeedsLatency ? "--max-latency-ms" : "--latency",
                "needs a measurement on ONNX Runtime, which --static does not make; use --latency-table TABLE with --max-predicted-latency-ms");
        if (options.Budgets.MaxPredictedLatencyMs is not null && options.LatencyTablePath is null)
            throw Bad("--max-predicted-latency-ms", "needs --latency-table TABLE to predict from (make one with cellc calibrate)");
    }

    /// <summary>The results may not overwrite an input, nor land in an input folder (where they would be read as genotypes).</summary>
    private static void RequireOutsideInputs(string outPath, IReadOnlyList<string> inputs, CandidateSource source)
    {
        var full = Path.GetFullPath(outPath);
        if (source.Parts.Any(p => p.Path != "-" && Path.GetFullPath(p.Path) == full))
            throw Bad("--out", $"'{outPath}' is an input file; the results must go to another file");
        var folder = Path.GetDirectoryName(full);
        foreach (var input in inputs)
            if (input != "-" && Directory.Exists(input) && Path.TrimEndingDirectorySeparator(Path.GetFullPath(input)) == folder)
                throw Bad("--out", $"'{outPath}' is inside the input folder {input}, where it would be read as genotypes; write the results elsewhere");
    }

    private static InputException Bad(string option, string problem) => new(SkeletonOverrides.Origin, option, problem);
}
