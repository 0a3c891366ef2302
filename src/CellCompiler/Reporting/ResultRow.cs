using System.Text.Json;
using CellCompiler.Lowering;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// One check record as the report uses it. Figures are null when the candidate never compiled;
/// <see cref="LatencyMs"/> (p50 at batch 1) is null when latency was not measured. Failures are
/// grouped by the record's own `reason_kind` (or, for records written without one, by status),
/// never by the wording of the reason. <see cref="Objectives"/> holds the value of each of the
/// report's objectives, in their order (null where the candidate has none).
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
    /// <summary>The cell has no trainable op (the record's `trivial-cell` note).</summary>
    public bool Trivial { get; init; }

    /// <summary>The budgets the record was judged against, when it carries them.</summary>
    public Budgets? Budgets { get; init; }

    /// <summary>
    /// Latency p50 at batch 1 as predicted rather than measured. Records do not carry a prediction yet;
    /// once CheckRecord has `latency_predicted_ms`, <see cref="From"/> sets it here and the report's
    /// predicted-against-measured chart appears for records that hold both.
    /// </summary>
    public double? LatencyPredictedMs { get; init; }

    public IReadOnlyList<double?> Objectives { get; init; } = [];

    /// <summary>The row of a record, with each objective's value from the scores (by id) or else the record's meta.</summary>
    public static ResultRow From(CheckRecord r, ScoreTable? scores = null, IReadOnlyList<Objective>? objectives = null)
    {
        objectives ??= [];
        var metrics = scores?.Take(r.Id);
        return new ResultRow(
            r.Id, r.Name, r.Hash, r.Status, r.Reason,
            r.Status == CheckStatus.Ok ? null : r.ReasonKind ?? r.Status.Name(),
            r.Params, r.Macs, r.PeakActivationBytes, r.TrainMemoryBytes, r.OnnxBytes, r.LatencyMs, r.Cached)
        {
            // Records written without notes read with none (older files).
            Trivial = (r.Notes ?? []).Contains(Lowerer.TrivialCellNote, StringComparer.Ordinal),
            Budgets = r.Budgets,
            HasScores = metrics is not null,
            Objectives = objectives.Select(o => metrics is not null && metrics.TryGetValue(o.Name, out var v) ? v : MetaNumber(r.Meta, o.Name)).ToList(),
        };
    }

    /// <summary>The scores file had a line for this id.</summary>
    public bool HasScores { get; init; }

    /// <summary>A top-level numeric field of the record's meta object, or null.</summary>
    private static double? MetaNumber(JsonElement? meta, string name) =>
        meta is { ValueKind: JsonValueKind.Object } m && m.TryGetProperty(name, out var value)
            && value.ValueKind == JsonValueKind.Number && value.TryGetDouble(out var number) && double.IsFinite(number)
            ? number : null;
}
