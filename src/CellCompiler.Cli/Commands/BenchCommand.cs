using System.CommandLine;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Compilation;
using CellCompiler.Input;
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
        latencyOptions.AddTo(command);
        skeleton.AddTo(command);
        settings.AddTo(command);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(target)!;
            var latency = latencyOptions.Resolve(parse);
            var (bytes, motifs, description) = Load(path, () => skeleton.Resolve(parse), () => settings.Resolve(parse));
            BenchResult result;
            try
            {
                var report = LatencyMeter.Measure(bytes, latency);
                LatencyBreakdown? parts = null;
                if (parse.GetValue(breakdown))
                {
                    var profile = KernelProfile.Collect(bytes, latency.BatchSizes[0], latency.Threads, latency.Warmup, latency.Runs);
                    parts = LatencyBreakdown.FromProfile(profile, motifs);
                }
                result = new BenchResult(path, description, report, parts);
            }
            catch (Exception e) when (e is OnnxRuntimeException or NotSupportedException)
            {
                throw new InputException(path, "", $"cannot run the model on ONNX Runtime: {e.Message.ReplaceLineEndings(" ")}");
            }
            if (parse.GetValue(json))
            {
                using var stdout = Console.OpenStandardOutput();
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

    private static (byte[] Bytes, IReadOnlySet<string>? Motifs, string Description) Load(string path, Func<Skeleton> skeleton, Func<CompileOptions> options)
    {
        if (!Path.GetExtension(path).Equals(".onnx", StringComparison.OrdinalIgnoreCase))
        {
            var genotype = GenotypeReader.ReadFile(path);
            var resolved = skeleton();
            CompiledModel model;
            try { model = Compiler.Compile(genotype, resolved, options()); }
            catch (Shapes.CompileException e) { throw new InputException(path, "", e.Message); }
            var motifs = genotype.Levels.Take(genotype.Levels.Count - 1).SelectMany(l => l.Motifs).Select(m => m.Name).ToHashSet(StringComparer.Ordinal);
            return (model.OnnxBytes, motifs, $"genotype {genotype.Name} on {CompileReport.DescribeSkeleton(resolved)}");
        }
        try
        {
            var info = new FileInfo(path);
            if (!info.Exists) throw new InputException(path, "", "file not found");
            if (info.Length > Input.Limits.MaxModelBytes) throw new InputException(path, "", "models over 2 GiB (external data) are not supported");
            return (File.ReadAllBytes(path), null, "ONNX model");
        }
        catch (IOException e) { throw new InputException(path, "", $"cannot read the file: {e.Message}"); }
    }
}

/// <summary>What `bench` measured.</summary>
public sealed record BenchResult(string Path, string Description, LatencyReport Latency, LatencyBreakdown? Breakdown);
