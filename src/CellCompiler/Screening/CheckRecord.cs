using System.Text.Json.Serialization;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>
/// The result of screening one candidate: one line of `cellc check --json` and of a results file,
/// written and read only by <see cref="CheckRecordJson"/> (System.Text.Json, source-generated,
/// snake_case names in declaration order). Figures are null when the candidate never compiled.
/// <see cref="ReasonKind"/> groups reasons for summaries and the report ("dead cell",
/// "over --max-params"). To add a field, add a property here (nullable, so that older files still
/// read) and set it in <see cref="CandidateChecker"/>.
/// </summary>
public sealed record CheckRecord
{
    public required string Id { get; init; }
    public string? Name { get; init; }
    public string? Hash { get; init; }

    /// <summary>The network's hash under the skeleton's merge mode (contract section 4): a population is deduplicated by it.</summary>
    public string? NetworkHash { get; init; }
    public required CheckStatus Status { get; init; }
    public string? Reason { get; init; }
    public string? ReasonKind { get; init; }

    /// <summary>One sample's output dimensions; written as ["N", ...dims].</summary>
    [JsonConverter(typeof(OutputShapeJsonConverter))]
    public int[]? OutputShape { get; init; }

    public long? Params { get; init; }
    public long? Buffers { get; init; }
    public long? Macs { get; init; }
    public long? PeakActivationBytes { get; init; }
    public IReadOnlyDictionary<string, int>? Ops { get; init; }
    public IReadOnlyList<string> Warnings { get; init; } = [];

    /// <summary>Findings for programs to act on without reading prose, e.g. "trivial-cell" (no trainable op in the cell).</summary>
    public IReadOnlyList<string> Notes { get; init; } = [];
    /// <summary>Whether the network was run on ONNX Runtime (false: compiled and counted only, e.g. already over a budget); null when it never compiled.</summary>
    public bool? SmokeTested { get; init; }

    public long? OnnxBytes { get; init; }
    public long? TrainMemoryBytes { get; init; }

    /// <summary>Latency p50 at batch 1 in ms, when measured.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public double? LatencyMs { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public LatencyReport? Latency { get; init; }

    public bool Cached { get; init; }

    /// <summary>Time spent on the candidate, ms.</summary>
    public double CheckMs { get; init; }

    /// <summary>The genotype's own `meta` object (contract section 1), copied unchanged; absent when it had none.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public System.Text.Json.JsonElement? Meta { get; init; }

    /// <summary>The budgets the run judged this candidate against (absent when none was set), so that a report can draw the cut.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public Budgets? Budgets { get; init; }

    /// <summary>Compiled: params and MACs known.</summary>
    [JsonIgnore]
    public bool HasFigures => Params is not null && Macs is not null;
}
