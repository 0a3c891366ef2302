namespace CellCompiler.Screening;

/// <summary>Running totals of a screening run: counts by status, reason kinds, and the Pareto fronts of working candidates.</summary>
public sealed class ScreeningSummary
{
    private readonly Dictionary<CheckStatus, long> _counts = [];
    private readonly Dictionary<string, long> _reasons = new(StringComparer.Ordinal);

    public ParetoFront ParamsVsMacs { get; } = new();
    public ParetoFront ParamsVsLatency { get; } = new();
    public bool LatencyMeasured { get; private set; }

    /// <summary>Records counted, those of an interrupted earlier run included.</summary>
    public long Done { get; private set; }

    /// <summary>Records that were already in the results file when this run resumed it.</summary>
    public long Resumed { get; private set; }

    public long Cached { get; private set; }

    public long Count(CheckStatus status) => _counts.GetValueOrDefault(status);

    /// <summary>Every record so far is ok.</summary>
    public bool AllOk => Count(CheckStatus.Ok) == Done;

    /// <summary>The most frequent kinds of reason, most frequent first.</summary>
    public IReadOnlyList<(string Reason, long Count)> TopReasons(int count) =>
        _reasons.OrderByDescending(kv => kv.Value).ThenBy(kv => kv.Key, StringComparer.Ordinal).Take(count).Select(kv => (kv.Key, kv.Value)).ToList();

    /// <summary>Counts a record written by an earlier, interrupted run of the same screening.</summary>
    public void AddPrevious(CheckRecord record)
    {
        Resumed++;
        Add(record with { Cached = false });
    }

    public void Add(CheckRecord record)
    {
        Done++;
        if (record.Cached) Cached++;
        _counts[record.Status] = Count(record.Status) + 1;
        if (record.Status != CheckStatus.Ok)
        {
            var kind = record.ReasonKind ?? record.Status.Name();
            _reasons[kind] = _reasons.GetValueOrDefault(kind) + 1;
            return;
        }
        if (record.Params is not { } parameters) return;
        if (record.Macs is { } macs) ParamsVsMacs.Add(record.Id, parameters, macs);
        if (record.LatencyMs is { } latency)
        {
            LatencyMeasured = true;
            ParamsVsLatency.Add(record.Id, parameters, latency);
        }
    }
}
