using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// One check record as the report uses it. Figures are null when the candidate never compiled;
/// <see cref="LatencyMs"/> (p50 at batch 1) is null when latency was not measured. Failures are
/// grouped by the record's own `reason_kind` (or, for records written without one, by status),
/// never by the wording of the reason.
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
    bool Cached)
{
    public static ResultRow From(CheckRecord r) => new(
        r.Id, r.Name, r.Hash, r.Status, r.Reason,
        r.Status == CheckStatus.Ok ? null : r.ReasonKind ?? r.Status.Name(),
        r.Params, r.Macs, r.PeakActivationBytes, r.TrainMemoryBytes, r.OnnxBytes, r.LatencyMs, r.Cached);
}
