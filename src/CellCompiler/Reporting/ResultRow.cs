using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// One `cellc check --json` record as the report uses it. Figures are null when the candidate never
/// compiled; <see cref="LatencyMs"/> (p50 at batch 1) is null when latency was not measured.
/// <see cref="ReasonKind"/> groups reasons for the summary (see <see cref="ReasonKinds"/>).
/// </summary>
public sealed record ResultRow(
    string Id,
    string? Name,
    string? Hash,
    CheckStatus Status,
    string? Reason,
    string? ReasonKind,
    long? Params,
    long? Macs,
    long? PeakActivationBytes,
    long? TrainMemoryBytes,
    long? OnnxBytes,
    double? LatencyMs,
    bool Cached);
