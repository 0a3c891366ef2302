using CellCompiler.Figures;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>
/// The result of screening one candidate. Figures are null when the candidate never compiled.
/// ReasonKind groups reasons for summaries (e.g. "dead cell", "over --max-params").
/// </summary>
public sealed record CheckRecord(
    string Id,
    string? Name,
    string? Hash,
    CheckStatus Status,
    string? Reason,
    int[]? OutputShape,
    NetworkFigures? Figures,
    long? TrainMemoryBytes,
    long? OnnxBytes,
    IReadOnlyList<string> Warnings,
    LatencyReport? Latency,
    double CheckMs,
    bool Cached = false,
    string? ReasonKind = null);
