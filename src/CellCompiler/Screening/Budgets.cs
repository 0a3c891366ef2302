using System.Text.Json.Serialization;

namespace CellCompiler.Screening;

/// <summary>
/// Optional limits on what a candidate may cost. MB and GB are decimal (10^6 and 10^9 bytes).
/// Serialized (run settings, and records when they carry the run's budgets) as max_params, max_macs,
/// max_activation_mb, max_train_memory_gb, max_latency_ms, and max_predicted_latency_ms when set.
/// </summary>
public sealed record Budgets(
    [property: JsonPropertyName("max_params")] long? MaxParams = null,
    [property: JsonPropertyName("max_macs")] long? MaxMacs = null,
    [property: JsonPropertyName("max_activation_mb")] double? MaxActivationMB = null,
    [property: JsonPropertyName("max_train_memory_gb")] double? MaxTrainMemoryGB = null,
    [property: JsonPropertyName("max_latency_ms")] double? MaxLatencyMs = null)
{
    /// <summary>Budget on the latency predicted from a latency table (p50 at batch 1, ms); left out of files when not set, so older settings files still compare equal.</summary>
    [JsonPropertyName("max_predicted_latency_ms")]
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public double? MaxPredictedLatencyMs { get; init; }

    public static readonly Budgets None = new();

    [JsonIgnore]
    public bool NeedsLatency => MaxLatencyMs is not null;
}
