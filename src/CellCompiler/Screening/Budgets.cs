namespace CellCompiler.Screening;

/// <summary>Optional limits on what a candidate may cost. MB and GB are decimal (10^6 and 10^9 bytes).</summary>
public sealed record Budgets(
    long? MaxParams = null,
    long? MaxMacs = null,
    double? MaxActivationMB = null,
    double? MaxTrainMemoryGB = null,
    double? MaxLatencyMs = null)
{
    public static readonly Budgets None = new();

    public bool NeedsLatency => MaxLatencyMs is not null;
}
