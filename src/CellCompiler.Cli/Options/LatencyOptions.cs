using System.CommandLine;
using CellCompiler.Input;
using CellCompiler.Runtime;

namespace CellCompiler.Cli.Options;

/// <summary>How latency is measured, shared by `check` and `bench`.</summary>
public sealed class LatencyOptions
{
    public Option<int> Threads { get; } = new("--threads") { HelpName = "N", Description = "ONNX Runtime intra-op threads.", DefaultValueFactory = _ => 1, CustomParser = r => HumanNumber.WholeNumber(1, 256)(r) };
    public Option<int> Warmup { get; } = new("--warmup") { HelpName = "N", Description = "Untimed runs before timing.", DefaultValueFactory = _ => 10, CustomParser = r => HumanNumber.WholeNumber(0, 100_000)(r) };
    public Option<int> Runs { get; } = new("--runs") { HelpName = "N", Description = "Timed runs (at least).", DefaultValueFactory = _ => 50, CustomParser = r => HumanNumber.WholeNumber(1, 1_000_000)(r) };
    public Option<double> MinSeconds { get; } = new("--min-seconds") { HelpName = "S", Description = "Keep timing until this many seconds of timed runs have passed.", DefaultValueFactory = _ => 0 };
    public Option<string> Batch { get; } = new("--batch") { HelpName = "a,b,c", Description = "Batch sizes to measure, e.g. 1,8,32.", DefaultValueFactory = _ => "1" };

    public void AddTo(Command command)
    {
        foreach (var option in new Option[] { Threads, Warmup, Runs, MinSeconds, Batch })
            command.Options.Add(option);
    }

    public LatencySettings Resolve(ParseResult parse)
    {
        var threads = parse.GetValue(Threads);
        var warmup = parse.GetValue(Warmup);
        var runs = parse.GetValue(Runs);
        var minSeconds = parse.GetValue(MinSeconds);
        if (threads is < 1 or > 256) throw Bad("--threads", $"must be between 1 and 256, found {threads}");
        if (warmup is < 0 or > 100_000) throw Bad("--warmup", $"must be between 0 and 100000, found {warmup}");
        if (runs is < 1 or > 1_000_000) throw Bad("--runs", $"must be between 1 and 1000000, found {runs}");
        if (!double.IsFinite(minSeconds) || minSeconds is < 0 or > 3600) throw Bad("--min-seconds", $"must be between 0 and 3600, found {minSeconds}");
        var text = parse.GetValue(Batch)!;
        var batches = new List<int>();
        foreach (var part in text.Split(','))
        {
            if (!int.TryParse(part.Trim(), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var batch) || batch is < 1 or > 65_536)
                throw Bad("--batch", $"'{text}' is not a list of batch sizes from 1 to 65536");
            if (!batches.Contains(batch)) batches.Add(batch);
        }
        return new LatencySettings(threads, warmup, runs, minSeconds, batches);
    }

    private static InputException Bad(string option, string problem) => new(SkeletonOverrides.Origin, option, problem);
}
