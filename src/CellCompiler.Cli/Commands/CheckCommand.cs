using System.CommandLine;
using System.Diagnostics;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Runtime;
using CellCompiler.Screening;
using Microsoft.Data.Sqlite;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc check`: compile each candidate, smoke-test it on ONNX Runtime, apply budgets; for whole populations too.</summary>
public static class CheckCommand
{
    public const string DefaultCachePath = ".cellc/cache.db";

    public static Command Create()
    {
        var input = new Argument<string>("INPUT")
        {
            Description = "A genotype file, a population file (.jsonl or .ndjson, or any file of one genotype per line), or - for JSON Lines on stdin.",
        };
        var json = new Option<bool>("--json") { Description = "One JSON object per candidate per line instead of the table." };
        var latency = new Option<bool>("--latency") { Description = "Measure CPU latency of every working candidate (never while other work of this run is running)." };
        var output = new Option<string?>("--out") { HelpName = "FILE", Description = "Write the JSON records to FILE (whole lines, each flushed when final) and the summary to stdout." };
        var jobs = new Option<int>("--jobs", "-j") { HelpName = "N", Description = "Parallel workers.", DefaultValueFactory = _ => Environment.ProcessorCount };
        var ordered = new Option<bool>("--ordered") { Description = "Write results in input order (default: in completion order, each with its id)." };
        var cachePath = new Option<string?>("--cache") { HelpName = "PATH", Description = $"Result cache (SQLite; default {DefaultCachePath} in the working folder; shared safely by parallel processes)." };
        var noCache = new Option<bool>("--no-cache") { Description = "Neither read nor write the cache." };
        var resume = new Option<bool>("--resume") { Description = "Continue an interrupted run: keep the records in --out and check only the candidates it lacks." };
        var shard = new Option<string?>("--shard") { HelpName = "K/N", Description = "Check only shard K of N (0 <= K < N), chosen from each candidate's id: N shards cover the population exactly once." };
        var skeleton = new SkeletonOptions();
        var settings = new CompileSettingsOptions();
        var budgets = new BudgetOptions();
        var latencyOptions = new LatencyOptions();

        var command = new Command("check",
            "Compile each candidate in memory, run it on ONNX Runtime (CPU) at batch 1 and 2, and check that it loads, " +
            "has the inferred output shape, gives finite logits that depend on the input, and fits the budgets. " +
            "Statuses: ok, over_budget, broken, invalid. Exit 0 if all are ok, 1 otherwise, 2 on a bad command line " +
            "or a bad single genotype file.");
        command.Arguments.Add(input);
        foreach (var option in new Option[] { json, output, jobs, ordered, cachePath, noCache, resume, shard, latency })
            command.Options.Add(option);
        skeleton.AddTo(command);
        settings.AddTo(command);
        budgets.AddTo(command);
        latencyOptions.AddTo(command);

        command.SetAction(parse =>
        {
            var clock = Stopwatch.StartNew();
            var budget = budgets.Resolve(parse);
            var measure = parse.GetValue(latency) || budget.NeedsLatency;
            var requested = latencyOptions.Resolve(parse); // validated even when unused, so typos surface
            var latencySettings = measure ? requested : null;
            // A latency budget is judged at batch 1, so batch 1 is always measured.
            if (latencySettings is not null && !latencySettings.BatchSizes.Contains(1))
                latencySettings = latencySettings with { Batches = [1, .. latencySettings.BatchSizes] };
            var options = new CheckOptions(skeleton.Resolve(parse), settings.Resolve(parse), budget,
                parse.GetValue(budgets.TrainBatch), latencySettings);

            var workerCount = parse.GetValue(jobs);
            if (workerCount is < 1 or > 256) throw Bad("--jobs", $"must be between 1 and 256, found {workerCount}");
            var shardText = parse.GetValue(shard);
            var selector = shardText is null ? ShardSelector.All
                : ShardSelector.Parse(shardText) ?? throw Bad("--shard", $"'{shardText}' is not K/N with 0 <= K < N");
            var outPath = parse.GetValue(output);
            if (parse.GetValue(resume) && outPath is null) throw Bad("--resume", "needs --out FILE: the records of the interrupted run");
            var inputPath = parse.GetValue(input)!;
            if (outPath is not null && inputPath != "-" && SameFile(outPath, inputPath))
                throw Bad("--out", $"'{outPath}' is the input file; the results must go to another file");
            if (parse.GetValue(noCache) && parse.GetValue(cachePath) is not null)
                throw Bad("--no-cache", "cannot be combined with --cache PATH; choose one");

            var source = OpenInput(inputPath);
            using var cache = parse.GetValue(noCache) ? null : OpenCache(parse.GetValue(cachePath) ?? DefaultCachePath);
            using var gate = new ExclusiveGate();
            var checker = new CandidateChecker(options, cache, gate);

            Dictionary<string, PreviousRecord> done = [];
            using var stdout = Console.OpenStandardOutput();
            ResultLog? log = null;
            if (outPath is not null)
            {
                var fingerprint = RunFingerprint.Of(inputPath, options, selector);
                try
                {
                    if (parse.GetValue(resume))
                    {
                        RunFingerprint.RequireSame(outPath, fingerprint);
                        (log, done) = ResultLog.Resume(outPath);
                    }
                    else
                    {
                        log = ResultLog.Create(outPath);
                    }
                    RunFingerprint.Write(outPath, fingerprint);
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    throw new InputException(outPath, "", $"cannot open the results file: {e.Message}");
                }
            }
            else if (parse.GetValue(json))
            {
                log = ResultLog.ToStream(stdout);
            }
            using var _ = log;
            var table = log is null ? new CheckTable(Console.Out, measure) : null;
            var summaryOut = log is not null && outPath is null ? Console.Error : Console.Out;

            table?.WriteHeader();
            var summary = new ScreeningSummary();
            foreach (var previous in done.Values) summary.AddPrevious(previous);
            var allOk = done.Values.All(previous => previous.Status == CheckStatus.Ok.Name());
            var singleInvalid = false;
            LatencyReport? anyLatency = null;
            var total = source.Total is { } lines && selector.Count == 1 ? Math.Max(0, lines - done.Count) : (long?)null;
            using (var progress = new ProgressDisplay(total, enabled: !source.Single))
            {
                ScreeningRun.Execute(source.Candidates,
                    candidate => selector.Contains(candidate.Id) && !done.ContainsKey(candidate.Id),
                    checker.Check,
                    new RunSettings(workerCount, parse.GetValue(ordered)),
                    record =>
                    {
                        log?.Append(CheckRecordJson.ToLine(record));
                        table?.WriteRow(record);
                        summary.Add(record);
                        allOk &= record.Status == CheckStatus.Ok;
                        singleInvalid |= source.Single && record.Status == CheckStatus.Invalid;
                        anyLatency ??= record.Latency;
                        progress.Update(summary);
                    });
                progress.Update(summary, force: !Console.IsErrorRedirected);
            }

            if (!source.Single || table is not null)
            {
                if (table is not null) summaryOut.WriteLine();
                if (done.Count > 0) summaryOut.WriteLine($"Resumed: {done.Count:N0} record(s) were already in {outPath}; the summary covers them too.");
                ScreeningReport.Write(summaryOut, summary, clock.Elapsed);
                CheckTable.WriteCautions(summaryOut, anyLatency);
            }
            // A single genotype file that cannot form a network is bad input, as for `compile`.
            return singleInvalid ? ExitCodes.BadInput : allOk ? ExitCodes.Ok : ExitCodes.CandidateFailed;
        });
        return command;
    }

    private static InputException Bad(string option, string problem) => new(SkeletonOverrides.Origin, option, problem);

    private static bool SameFile(string a, string b) =>
        string.Equals(Path.GetFullPath(a), Path.GetFullPath(b), StringComparison.Ordinal);

    private static SqliteResultCache OpenCache(string path)
    {
        try { return new SqliteResultCache(path); }
        catch (Exception e) when (e is SqliteException or IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot open the cache: {e.Message} (use --cache PATH or --no-cache)");
        }
    }

    private sealed record InputSource(IEnumerable<Candidate> Candidates, bool Single, long? Total);

    /// <summary>
    /// A single genotype file is parsed up front (bad input: exit 2); a population is read lazily,
    /// a bad line becoming that candidate's invalid record. A population is `-`, a .jsonl or .ndjson
    /// file, or any file whose first two non-blank lines each hold a JSON object.
    /// </summary>
    private static InputSource OpenInput(string input)
    {
        if (input == "-")
            return new InputSource(PopulationReader.Read(Console.In, "<stdin>"), false, null);
        if (!File.Exists(input))
            throw new InputException(input, "", Directory.Exists(input) ? "is a folder, not a file" : "file not found");
        var extension = Path.GetExtension(input).ToLowerInvariant();
        if (extension is ".jsonl" or ".ndjson" || LooksLikeJsonLines(input))
            return new InputSource(ReadPopulationFile(input), false, CountNonBlankLines(input));
        var genotype = GenotypeReader.ReadFile(input);
        return new InputSource([Candidate.Valid(genotype.Id ?? genotype.Name, genotype)], true, 1);
    }

    private static bool LooksLikeJsonLines(string path)
    {
        try
        {
            using var reader = new StreamReader(path);
            var buffer = new char[4096];
            var read = reader.ReadBlock(buffer, 0, buffer.Length);
            var firstLines = new string(buffer, 0, read).Split('\n').Select(l => l.Trim()).Where(l => l.Length > 0).Take(2).ToList();
            return firstLines.Count == 2 && firstLines.All(l => l.StartsWith('{') && l.EndsWith('}'));
        }
        catch (IOException) { return false; }
    }

    /// <summary>
    /// A quick count of non-blank lines for the progress display, over bytes in blocks, so that no
    /// line (however long) is ever held in memory.
    /// </summary>
    private static long? CountNonBlankLines(string path)
    {
        try
        {
            using var stream = File.OpenRead(path);
            var buffer = new byte[1 << 16];
            long count = 0;
            var lineHasText = false;
            int read;
            while ((read = stream.Read(buffer, 0, buffer.Length)) > 0)
            {
                foreach (var b in buffer.AsSpan(0, read))
                {
                    if (b == (byte)'\n')
                    {
                        if (lineHasText) count++;
                        lineHasText = false;
                    }
                    else if (b is not ((byte)' ' or (byte)'\t' or (byte)'\r'))
                    {
                        lineHasText = true;
                    }
                }
            }
            return lineHasText ? count + 1 : count;
        }
        catch (IOException) { return null; }
    }

    private static IEnumerable<Candidate> ReadPopulationFile(string path)
    {
        using var reader = new StreamReader(path);
        foreach (var candidate in PopulationReader.Read(reader, path))
            yield return candidate;
    }
}
