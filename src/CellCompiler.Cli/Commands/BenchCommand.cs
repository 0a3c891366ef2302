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
                    // The trace grows with every profiled run: a bounded number is plenty for shares.
                    var profile = KernelProfile.Collect(bytes, latency.BatchSizes[0], latency.Threads,
                        Math.Min(latency.Warmup, 10), Math.Min(latency.Runs, 200));
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

    /// <summary>
    /// A model this tool made (it carries a genotype_hash) is broken down by part too: its motif
    /// names are read back from the hierarchical node names ("eN:motif" segments that are not primitives).
    /// </summary>
    private static IReadOnlySet<string>? OwnMotifs(byte[] bytes)
    {
        try
        {
            var model = OnnxFormat.ModelProto.Parser.ParseFrom(bytes);
            if (!model.MetadataProps.Any(p => p.Key == "genotype_hash")) return null;
            return model.Graph.Node
                .SelectMany(n => n.Name.Split('/'))
                .Select(segment => segment.IndexOf(':') is var colon and > 0 ? segment[(colon + 1)..] : "")
                .Where(name => name.Length > 0 && !Primitives.IsPrimitive(name) && name is not ("concat" or "sum"))
                .ToHashSet(StringComparer.Ordinal);
        }
        catch (Google.Protobuf.InvalidProtocolBufferException) { return null; }
    }

    private static (byte[] Bytes, IReadOnlySet<string>? Motifs, string Description) Load(string path, Func<Skeleton> skeleton, Func<CompileOptions> options)
    {
        if (!Path.GetExtension(path).Equals(".onnx", StringComparison.OrdinalIgnoreCase))
        {
            var genotype = GenotypeReader.ReadFile(path);
            var resolved = skeleton();
            CompiledModel model;
            try { model = Compiler.Compile(genotype, resolved, options()); }
            catch (Graph.CompileException e) { throw new InputException(path, "", e.Message); }
            var motifs = genotype.Levels.Take(genotype.Levels.Count - 1).SelectMany(l => l.Motifs).Select(m => m.Name).ToHashSet(StringComparer.Ordinal);
            return (model.OnnxBytes, motifs, $"genotype {genotype.Name} on {CompileReport.DescribeSkeleton(resolved)}");
        }
        try
        {
            var info = new FileInfo(path);
            if (!info.Exists) throw new InputException(path, "", "file not found");
            if (info.Length > Input.Limits.MaxModelBytes) throw new InputException(path, "", "models over 2 GiB (external data) are not supported");
            var bytes = File.ReadAllBytes(path);
            return (bytes, OwnMotifs(bytes), "ONNX model");
        }
        catch (IOException e) { throw new InputException(path, "", $"cannot read the file: {e.Message}"); }
    }
}

/// <summary>What `bench` measured.</summary>
public sealed record BenchResult(string Path, string Description, LatencyReport Latency, LatencyBreakdown? Breakdown);
