using System.CommandLine;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Prediction;
using CellCompiler.Runtime;
using Microsoft.ML.OnnxRuntime;

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
            BenchResult result;
            try
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
                result = new BenchResult(path, description, report, parts)
                {
                    PredictedMs = predicted,
                    LatencyTable = tablePath,
                };
            }
            catch (Exception e) when (e is OnnxRuntimeException or NotSupportedException)
            {
                throw new InputException(path, "", $"cannot run the model on ONNX Runtime: {e.Message.ReplaceLineEndings(" ")}");
            }
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

    /// <summary>A model this tool made carries its genotype's hash: its node names are then hierarchical paths.</summary>
    private static bool MadeByUs(byte[] bytes)
    {
        try { return OnnxFormat.ModelProto.Parser.ParseFrom(bytes).MetadataProps.Any(p => p.Key == "genotype_hash"); }
        catch (Google.Protobuf.InvalidProtocolBufferException) { return false; }
    }

    private static (byte[] Bytes, bool Ours, string Description, (Genotype Genotype, Skeleton Skeleton)? Source) Load(
        string path, Func<Skeleton> skeleton, Func<CompileOptions> options, IReadOnlyList<int> batches)
    {
        if (!Path.GetExtension(path).Equals(".onnx", StringComparison.OrdinalIgnoreCase))
        {
            var genotype = GenotypeReader.ReadFile(path);
            var resolved = skeleton();
            RequireRunnable(path, resolved.Input.Channels * (long)resolved.Input.Height * resolved.Input.Width, batches, null);
            CompiledModel model;
            try { model = Compiler.Compile(genotype, resolved, options()); }
            catch (Graph.CompileException e) { throw new InputException(path, "", e.Message); }
            catch (Lowering.DeadCellException e) { throw e.In(path); }
            RequireRunnable(path, 0, batches, model.Figures);
            return (model.OnnxBytes, true, $"genotype {genotype.Name} on {CompileReport.DescribeSkeleton(resolved)}", (genotype, resolved));
        }
        var bytes = BoundedFile.ReadAll(path, Input.Limits.MaxModelBytes, "an ONNX model (external data is not supported)");
        return (bytes, MadeByUs(bytes), "ONNX model", null);
    }

    /// <summary>
    /// Refuses, before anything is allocated, a batch whose input cannot be one array, or whose run
    /// would need more than half the memory available (estimated: weights three times, and the peak
    /// activations of the batch twice over).
    /// </summary>
    private static void RequireRunnable(string path, long inputPerSample, IReadOnlyList<int> batches, Figures.NetworkFigures? figures)
    {
        var batch = batches.Max();
        if (inputPerSample > 0 && (Int128)inputPerSample * batch > Array.MaxLength)
            throw new InputException(path, "--batch",
                $"batch {batch} of {inputPerSample:N0} input values each needs {(Int128)inputPerSample * batch:N0} values in one tensor, more than the {Array.MaxLength:N0} allowed; use a smaller --batch");
        if (figures is null) return;
        var needed = (Int128)figures.WeightBytes * 3 + (Int128)figures.PeakActivationBytes * batch * 2;
        var available = Screening.MemoryGuard.DefaultCapacity;
        if (needed > available)
            throw new InputException(path, "--batch",
                $"batch {batch} needs about {Formatting.Bytes((long)Int128.Min(needed, long.MaxValue))} of memory, more than the {Formatting.Bytes(available)} " +
                "(half of what is available) a measurement may use; use a smaller --batch");
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
