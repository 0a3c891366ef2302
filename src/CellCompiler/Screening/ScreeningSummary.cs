namespace CellCompiler.Screening;

/// <summary>Running totals of a screening run: counts by status, reasons, and the Pareto fronts of working candidates.</summary>
public sealed class ScreeningSummary
{
    private readonly Dictionary<CheckStatus, long> _counts = [];
    private readonly Dictionary<string, long> _reasons = new(StringComparer.Ordinal);

    public ParetoFront ParamsVsMacs { get; } = new();
    public ParetoFront ParamsVsLatency { get; } = new();
    public bool LatencyMeasured { get; private set; }
    public long Done { get; private set; }
    public long Cached { get; private set; }

    public long Count(CheckStatus status) => _counts.GetValueOrDefault(status);

    /// <summary>The most frequent kinds of reason, most frequent first.</summary>
    public IReadOnlyList<(string Reason, long Count)> TopReasons(int count) =>
        _reasons.OrderByDescending(kv => kv.Value).ThenBy(kv => kv.Key, StringComparer.Ordinal).Take(count).Select(kv => (kv.Key, kv.Value)).ToList();

    /// <summary>Counts a record written by an earlier, interrupted run of the same screening.</summary>
    public void AddPrevious(PreviousRecord record)
    {
        var status = Enum.GetValues<CheckStatus>().First(s => s.Name() == record.Status);
        Done++;
        _counts[status] = Count(status) + 1;
        if (status != CheckStatus.Ok)
        {
            var kind = record.ReasonKind ?? record.Status;
            _reasons[kind] = _reasons.GetValueOrDefault(kind) + 1;
            return;
        }
        if (record.Params is { } p && record.Macs is { } m) ParamsVsMacs.Add(record.Id, p, m);
        if (record.Params is { } q && record.LatencyMs is { } l)
        {
            LatencyMeasured = true;
            ParamsVsLatency.Add(record.Id, q, l);
        }
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
        }
        if (record.Status != CheckStatus.Ok || record.Figures is not { } f) return;
        ParamsVsMacs.Add(record.Id, f.Params, f.Macs);
        if (record.Latency?.AtBatch(1) is { } latency)
        {
            LatencyMeasured = true;
            ParamsVsLatency.Add(record.Id, f.Params, latency.P50Ms);
        }
    }
}
