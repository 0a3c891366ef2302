using System.CommandLine;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc check`: parses its options, runs a <see cref="ScreeningSession"/> and prints what it tells.</summary>
public static class CheckCommand
{
    public const string DefaultCachePath = ".cellc/cache.db";

    public static Command Create()
    {
        var inputs = new Argument<string[]>("INPUT")
        {
            Description = "Genotype files, population files (JSON Lines: .jsonl, .ndjson, or any file of one genotype per line), " +
                          "folders of genotype files, or - for JSON Lines on stdin.",
            Arity = ArgumentArity.OneOrMore,
        };
        var json = new Option<bool>("--json") { Description = "One JSON object per candidate per line instead of the table." };
        var latency = new Option<bool>("--latency") { Description = "Measure CPU latency of every working candidate (never while other work of this run is running)." };
        var output = new Option<string?>("--out") { HelpName = "FILE", Description = "Write the JSON records to FILE (whole lines, each flushed when final) and the summary to stdout." };
        var jobs = new Option<int>("--jobs", "-j") { HelpName = "N", Description = "Parallel workers.", DefaultValueFactory = _ => Environment.ProcessorCount, CustomParser = r => HumanNumber.WholeNumber(1, 256)(r) };
        var ordered = new Option<bool>("--ordered") { Description = "Write results in input order (default: in completion order, each with its id)." };
        var cachePath = new Option<string?>("--cache") { HelpName = "PATH", Description = $"Result cache (SQLite; default {DefaultCachePath} in the working folder; shared safely by parallel processes)." };
        var noCache = new Option<bool>("--no-cache") { Description = "Neither read nor write the cache." };
        var resume = new Option<bool>("--resume") { Description = "Continue an interrupted run: keep the records in --out and check only the candidates it lacks." };
        var shard = new Option<string?>("--shard") { HelpName = "K/N", Description = "Check only shard K of N (0 <= K < N), chosen from each candidate's id: N shards cover the population exactly once." };
        var maxRunNodes = new Option<int>("--max-run-nodes")
        {
            HelpName = "N",
            Description = $"Run a network on ONNX Runtime only up to N nodes (default {CheckOptions.DefaultMaxRunNodes:N0}); larger ones are counted but reported as over_budget (too large to run here).",
            DefaultValueFactory = _ => CheckOptions.DefaultMaxRunNodes,
            CustomParser = r => HumanNumber.WholeNumber(1, 10_000_000)(r),
        };
        var maxRunMacs = new Option<long?>("--max-run-macs")
        {
            HelpName = "N",
            Description = $"Run a network on ONNX Runtime only up to N multiply-accumulates per sample (default {CheckOptions.DefaultMaxRunMacs / 1e9:0}G); larger ones are counted but reported as over_budget (too large to run here).",
            CustomParser = HumanNumber.ParsePositiveCount,
        };
        var maxRunSeconds = new Option<double?>("--max-run-seconds")
        {
            HelpName = "X",
            Description = $"Stop a candidate's smoke test on ONNX Runtime after X seconds, its session included (default {CheckOptions.DefaultMaxRunSeconds:0}; 1e6 or more: no limit), and report it as over_budget (too large to run here).",
            CustomParser = HumanNumber.PositiveAmount("s"),
        };
        var memoryLimit = new Option<double?>("--memory-limit-gb")
        {
            HelpName = "X",
            Description = "Memory the candidates may use at once, all workers together, in GB (default: half of the memory available); a candidate that needs more alone is not run.",
            CustomParser = HumanNumber.PositiveAmount("GB"),
        };
        var latencyTable = new Option<string?>("--latency-table")
        {
            HelpName = "TABLE",
            Description = "Predict every compiled candidate's CPU latency (p50 at batch 1) from a table made by cellc calibrate on this machine; " +
                          "units it lacks are measured on first use and added to it.",
        };
        var staticOnly = new Option<bool>("--static")
        {
            Description = "Do not run candidates on ONNX Runtime: compile in memory (no weights, no ONNX bytes), figures, budgets and, " +
                          "with --latency-table, the prediction; ok then means \"compiles and fits\".",
        };
        var runOverBudget = new Option<bool>("--run-over-budget")
        {
            Description = "Also run candidates already over a budget that needs no run (params, MACs, memory), so that their record says whether they work; by default they are compiled and counted but not run.",
        };
        var skeleton = new SkeletonOptions();
        var settings = new CompileSettingsOptions();
        var budgets = new BudgetOptions();
        var latencyOptions = new LatencyOptions();

        var command = new Command("check",
            "Compile each candidate in memory, run it on ONNX Runtime (CPU) at batch 1 and 2, and check that it loads, " +
            "has the inferred output shape, gives finite logits that depend on the input, and fits the budgets. " +
            "Statuses: ok, over_budget, broken, invalid. Exit 0 if all are ok, 1 otherwise, 2 on a bad command line " +
            "or a bad single genotype file.");
        command.Arguments.Add(inputs);
        foreach (var option in new Option[] { json, output, jobs, ordered, cachePath, noCache, resume, shard, latency, latencyTable, staticOnly, maxRunNodes, maxRunMacs, maxRunSeconds, memoryLimit, runOverBudget })
            command.Options.Add(option);
        skeleton.AddTo(command);
        settings.AddTo(command);
        budgets.AddTo(command);
        latencyOptions.AddTo(command);

        command.SetAction(parse =>
        {
            var budget = budgets.Resolve(parse);
            var measure = parse.GetValue(latency) || budget.NeedsLatency;
            var requested = latencyOptions.Resolve(parse); // validated even when unused, so typos surface
            var latencySettings = measure ? requested : null;
            // A latency budget is judged at batch 1, so batch 1 is always measured.
            if (latencySettings is not null && !latencySettings.BatchSizes.Contains(1))
                latencySettings = latencySettings with { Batches = [1, .. latencySettings.BatchSizes] };
            var shardText = parse.GetValue(shard);
            if (parse.GetValue(noCache) && parse.GetValue(cachePath) is not null)
                throw Bad("--no-cache", "cannot be combined with --cache PATH; choose one");
            var request = new ScreeningRequest
            {
                Inputs = parse.GetValue(inputs)!,
                Options = new CheckOptions(skeleton.Resolve(parse), settings.Resolve(parse), budget,
                    parse.GetValue(budgets.TrainBatch), latencySettings, parse.GetValue(maxRunNodes), parse.GetValue(runOverBudget))
                {
                    MaxRunMacs = parse.GetValue(maxRunMacs) ?? CheckOptions.DefaultMaxRunMacs,
                    MaxRunSeconds = parse.GetValue(maxRunSeconds) ?? CheckOptions.DefaultMaxRunSeconds,
                    LatencyTablePath = parse.GetValue(latencyTable),
                    PredictionThreads = requested.Threads,
                    Static = parse.GetValue(staticOnly),
                },
                Jobs = parse.GetValue(jobs),
                Ordered = parse.GetValue(ordered),
                Shard = shardText is null ? ShardSelector.All
                    : ShardSelector.Parse(shardText) ?? throw Bad("--shard", $"'{shardText}' is not K/N with 0 <= K < N"),
                OutPath = parse.GetValue(output),
                Resume = parse.GetValue(resume),
                CachePath = parse.GetValue(noCache) ? null : parse.GetValue(cachePath) ?? DefaultCachePath,
                MemoryLimitBytes = parse.GetValue(memoryLimit) is { } gb ? (long)Math.Min(gb * 1e9, long.MaxValue / 2) : MemoryGuard.DefaultCapacity,
            };

            using var stdout = StandardStreams.Output();
            var recordStream = parse.GetValue(json) && request.OutPath is null ? stdout : null;
            var table = parse.GetValue(json) || request.OutPath is not null ? null : new CheckTable(Console.Out, measure, request.Options.LatencyTablePath is not null);
            var summaryOut = recordStream is not null ? Console.Error : Console.Out;
            var observer = new Observer(table);
            var outcome = ScreeningSession.Run(request, observer, StandardStreams.Input, recordStream);
            observer.Progress?.Finish();
            observer.Progress?.Dispose();

            if (!outcome.Single || table is not null)
            {
                if (table is not null) summaryOut.WriteLine();
                var resumed = outcome.Summary.Resumed;
                if (resumed > 0)
                    summaryOut.WriteLine($"Resumed: {Wording.Counted(resumed, "record")} {(resumed == 1 ? "was" : "were")} already in {request.OutPath}; the summary covers them too.");
                if (outcome.RepeatedIds > 0)
                    summaryOut.WriteLine($"Repeated ids: {Wording.Counted(outcome.RepeatedIds, "candidate")} used an id seen before (see the warnings).");
                ScreeningReport.Write(summaryOut, outcome.Summary, outcome.Elapsed);
                CheckTable.WriteCautions(summaryOut, outcome.AnyLatency, request.Options.LatencyTablePath);
            }
            return outcome.Verdict switch
            {
                ScreeningVerdict.AllOk => ExitCodes.Ok,
                ScreeningVerdict.SomeNotOk => ExitCodes.CandidateFailed,
                ScreeningVerdict.BadSingleGenotype => ExitCodes.BadInput,
                _ => throw new InvalidOperationException($"unknown screening verdict {outcome.Verdict}"),
            };
        });
        return command;
    }

    private static InputException Bad(string option, string problem) => new(SkeletonOverrides.Origin, option, problem);

    /// <summary>Shows a running screening: the table (without --json/--out), progress and warnings on stderr.</summary>
    private sealed class Observer(CheckTable? table) : IScreeningObserver
    {
        public ProgressDisplay? Progress { get; private set; }

        public void Started(ScreeningStart start)
        {
            Progress = new ProgressDisplay(enabled: !start.Single);
            Progress.Start(start);
            table?.WriteHeader();
        }

        public void Checked(CheckRecord record, ScreeningSummary summary)
        {
            table?.WriteRow(record);
            Progress?.Update(summary);
        }

        public void Warning(string message) => Console.Error.WriteLine($"cellc: warning: {TerminalText.Safe(message)}");
    }
}
