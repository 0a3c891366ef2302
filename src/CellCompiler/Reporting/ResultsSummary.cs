using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>The figures of one candidate that the charts need (32 bytes, so every candidate can be kept).</summary>
public readonly record struct ChartPoint(double Params, double Macs, double LatencyMs, CheckStatus Status)
{
    public bool HasLatency => !double.IsNaN(LatencyMs);
}

/// <summary>
/// Running totals of a results file for the report: counts by status, reason kinds, the Pareto fronts
/// of the ok candidates (params vs MACs, params vs latency p50; the same fronts `cellc check` reports),
/// the figures of every candidate that has them (for the charts) and the malformed lines.
/// </summary>
public sealed class ResultsSummary
{
    /// <summary>Malformed lines listed in the report; all are counted.</summary>
    public const int MalformedListed = 50;

    private readonly Dictionary<CheckStatus, long> _counts = [];
    private readonly Dictionary<string, (long Count, CheckStatus Status)> _reasons = new(StringComparer.Ordinal);
    private readonly List<ChartPoint> _points = [];
    private readonly List<MalformedLine> _malformed = [];

    public long Total { get; private set; }
    public long Cached { get; private set; }
    public long WithLatency { get; private set; }
    public long MalformedCount { get; private set; }
    public IReadOnlyList<MalformedLine> Malformed => _malformed;

    /// <summary>Every candidate with params and MACs, in reading order.</summary>
    public IReadOnlyList<ChartPoint> Points => _points;

    public ParetoFront ParamsVsMacs { get; } = new();
    public ParetoFront ParamsVsLatency { get; } = new();

    public long Count(CheckStatus status) => _counts.GetValueOrDefault(status);

    /// <summary>The most frequent reason kinds, most frequent first, then by name, with the status they were first seen with.</summary>
    public IReadOnlyList<(string Kind, long Count, CheckStatus Status)> TopReasons(int count) =>
        _reasons.OrderByDescending(kv => kv.Value.Count).ThenBy(kv => kv.Key, StringComparer.Ordinal)
            .Take(count).Select(kv => (kv.Key, kv.Value.Count, kv.Value.Status)).ToList();

    public int ReasonKindCount => _reasons.Count;

    public void Add(ResultRow row)
    {
        Total++;
        if (row.Cached) Cached++;
        _counts[row.Status] = Count(row.Status) + 1;
        if (row.ReasonKind is { } kind)
            _reasons[kind] = _reasons.TryGetValue(kind, out var seen) ? (seen.Count + 1, seen.Status) : (1, row.Status);
        if (row.LatencyMs is not null) WithLatency++;
        if (row.Params is not { } parameters || row.Macs is not { } macs) return;
        _points.Add(new ChartPoint(parameters, macs, row.LatencyMs ?? double.NaN, row.Status));
        if (row.Status != CheckStatus.Ok) return;
        ParamsVsMacs.Add(row.Id, parameters, macs);
        if (row.LatencyMs is { } latency) ParamsVsLatency.Add(row.Id, parameters, latency);
    }

    public void AddMalformed(MalformedLine line)
    {
        MalformedCount++;
        if (_malformed.Count < MalformedListed) _malformed.Add(line);
    }
}
