using System.CommandLine;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Prediction;
using CellCompiler.Runtime;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc bench`: CPU latency of a genotype (compiled on the fly) or of any ONNX model with float inputs.</summary>
public static class BenchCommand
{
    public static Command Create()
    {
        var target = new Argument<string>("MODEL|GENOTYPE") { Description = "An .onnx model (any, with float inputs) or a genotype file." };
        var breakdown = new Option<bool>("--breakdown")
        {
            Description = "Attribute kernel time to the stem, each cell, each reduction and the head (by op type for other models), from ONNX Runtime's profiler.",
        };
        var json = new Option<bool>("--json") { Description = "Print one JSON object instead of the table." };
        var latencyTable = new Option<string?>("--latency-table")
        {
            HelpName = "TABLE",
            Description = "Also predict the genotype's latency (batch 1) from a table made by cellc calibrate on this machine, and print it next to the measurement with the error.",
        };
        var latencyOptions = new LatencyOptions();
        var skeleton = new SkeletonOptions();
        var settings = new CompileSettingsOptions();

        var command = new Command("bench",
            "Measure CPU inference latency with ONNX Runtime: warm-up runs, then timed runs with inputs and outputs bound in advance; " +
            "min, p50, p90, mean and standard deviation per batch size. Symbolic dimensions are set to the batch size. " +
            "CPU latency does not transfer to other hardware.");
        command.Arguments.Add(target);
        command.Options.Add(breakdown);
        command.Options.Add(json);
        command.Options.Add(latencyTable);
        latencyOptions.AddTo(command);
        skeleton.AddTo(command);
        settings.AddTo(command);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(target)!;
            var latency = latencyOptions.Resolve(parse);
            var tablePath = parse.GetValue(latencyTable);
            if (tablePath is not null && Path.GetExtension(path).Equals(".onnx", StringComparison.OrdinalIgnoreCase))
                throw new InputException(SkeletonOverrides.Origin, "--latency-table",
                    "needs a genotype file: a prediction is made from the units of a genotype, not from an ONNX model");
            // The table is read (and refused under other conditions) before anything is measured.
            var predictor = tablePath is null ? null
                : LatencyPredictor.Open(tablePath, TableConditions.Here(latency.Threads, settings.Resolve(parse).Opset),
                    message => Console.Error.WriteLine($"cellc: warning: {TerminalText.Safe(message)}"));
            var (bytes, ours, description, source) = Load(path, () => skeleton.Resolve(parse), () => settings.Resolve(parse), latency.BatchSizes);
            var result = ModelBench.OnRuntime(path, () =>
            {
                // Units the table lacks are measured first, so that the candidate's own measurement is not disturbed afterwards.
                double? predicted = predictor is null || source is not { } s ? null
                    : predictor.Predict(s.Genotype, Lowering.Liveness.Analyse(s.Genotype), s.Skeleton);
                var report = LatencyMeter.Measure(bytes, latency);
                LatencyBreakdown? parts = null;
                if (parse.GetValue(breakdown))
                {
                    // The trace grows with every profiled run: a bounded number is plenty for shares.
                    var profile = KernelProfile.Collect(bytes, latency.BatchSizes[0], latency.Threads,
                        Math.Min(latency.Warmup, 10), Math.Min(latency.Runs, 200));
                    parts = LatencyBreakdown.FromProfile(profile, ours);
                }
                return new BenchResult(path, description, report, parts)
                {
                    PredictedMs = predicted,
                    LatencyTable = tablePath,
                };
            });
            if (parse.GetValue(json))
            {
                using var stdout = StandardStreams.Output();
                BenchReport.WriteJson(stdout, result);
            }
            else
            {
                BenchReport.WriteText(Console.Out, result);
            }
            return ExitCodes.Ok;
        });
        return command;
    }

    private static (byte[] Bytes, bool Ours, string Description, (Genotype Genotype, Skeleton Skeleton)? Source) Load(
        string path, Func<Skeleton> skeleton, Func<CompileOptions> options, IReadOnlyList<int> batches)
    {
        if (Path.GetExtension(path).Equals(".onnx", StringComparison.OrdinalIgnoreCase))
        {
            var model = ModelBench.Read(path, batches);
            return (model.Bytes, model.MadeByUs, "ONNX model", null);
        }
        var genotype = GenotypeReader.ReadFile(path);
        var resolved = skeleton();
        // The input is checked before compiling, the whole network's memory after.
        RunNeeds.OfInput(resolved.Input).Require(path, batches);
        CompiledModel compiled;
        try { compiled = Compiler.Compile(genotype, resolved, options()); }
        catch (Graph.CompileException e) { throw new InputException(path, "", e.Message); }
        catch (Lowering.DeadCellException e) { throw e.In(path); }
        RunNeeds.OfNetwork(resolved.Input, compiled.Figures).Require(path, batches);
        return (compiled.OnnxBytes, true, $"genotype {genotype.Name} on {CompileReport.DescribeSkeleton(resolved)}", (genotype, resolved));
    }
}

/// <summary>What `bench` measured, and with --latency-table what the table predicts at batch 1.</summary>
public sealed record BenchResult(string Path, string Description, LatencyReport Latency, LatencyBreakdown? Breakdown)
{
    public double? PredictedMs { get; init; }
    public string? LatencyTable { get; init; }

    /// <summary>(predicted - measured p50) / measured p50 at batch 1, in percent; null without both.</summary>
    public double? PredictionErrorPercent =>
        PredictedMs is { } predicted && Latency.AtBatch(1) is { P50Ms: > 0 } measured ? 100 * (predicted - measured.P50Ms) / measured.P50Ms : null;
}
