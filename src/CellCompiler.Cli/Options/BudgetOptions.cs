using System.CommandLine;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Options;

/// <summary>The budgets of `check`: counts accept 5e6, 5M, 250k; amounts are plain numbers in the option's unit.</summary>
public sealed class BudgetOptions
{
    public Option<long?> MaxParams { get; } = new("--max-params") { HelpName = "N", Description = "Budget on parameters (e.g. 5M, 250k).", CustomParser = HumanNumber.ParsePositiveCount };
    public Option<long?> MaxMacs { get; } = new("--max-macs") { HelpName = "N", Description = "Budget on MACs per sample (e.g. 75M, 1.5G).", CustomParser = HumanNumber.ParsePositiveCount };
    public Option<double?> MaxActivationMB { get; } = new("--max-activation-mb") { HelpName = "X", Description = "Budget on peak activation memory at batch 1, in MB (10^6 bytes).", CustomParser = HumanNumber.PositiveAmount("MB") };
    public Option<double?> MaxTrainMemoryGB { get; } = new("--max-train-memory-gb") { HelpName = "X", Description = "Budget on the training memory estimate at --train-batch, in GB (10^9 bytes).", CustomParser = HumanNumber.PositiveAmount("GB") };
    public Option<int> TrainBatch { get; } = new("--train-batch") { HelpName = "B", Description = "Batch size of the training memory estimate.", DefaultValueFactory = _ => CheckOptions.DefaultTrainBatch, CustomParser = r => HumanNumber.WholeNumber(1, 1_000_000)(r) };
    public Option<double?> MaxLatencyMs { get; } = new("--max-latency-ms") { HelpName = "X", Description = "Budget on CPU latency p50 at batch 1, in ms (implies --latency).", CustomParser = HumanNumber.PositiveAmount("ms") };
    public Option<double?> MaxPredictedLatencyMs { get; } = new("--max-predicted-latency-ms") { HelpName = "X", Description = "Budget on the latency predicted from --latency-table (p50 at batch 1), in ms.", CustomParser = HumanNumber.PositiveAmount("ms") };

    public void AddTo(Command command)
    {
        foreach (var option in new Option[] { MaxParams, MaxMacs, MaxActivationMB, MaxTrainMemoryGB, TrainBatch, MaxLatencyMs, MaxPredictedLatencyMs })
            command.Options.Add(option);
    }

    public Budgets Resolve(ParseResult parse) => new(
        parse.GetValue(MaxParams), parse.GetValue(MaxMacs), parse.GetValue(MaxActivationMB),
        parse.GetValue(MaxTrainMemoryGB), parse.GetValue(MaxLatencyMs))
    {
        MaxPredictedLatencyMs = parse.GetValue(MaxPredictedLatencyMs),
    };
}
