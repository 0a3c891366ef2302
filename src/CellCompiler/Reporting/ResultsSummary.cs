using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// Running totals of a results file for the report: counts by status, reason kinds, the figures of
/// every candidate that has them (for the charts), the Pareto fronts of the ok candidates, the
/// budgets the records carry, how records and scores joined, and the malformed lines. Candidates
/// with the `trivial-cell` note (no trainable op) are drawn but left out of the fronts unless
/// <see cref="IncludeTrivial"/>: they would take the fronts over with figures no trained cell has.
/// </summary>
public sealed class ResultsSummary
{
    /// <summary>Malformed lines listed in the report; all are counted.</summary>
    public const int MalformedListed = 50;

    /// <summary>Ids listed where records and scores do not join; all are counted.</summary>
    public const int UnjoinedListed = 20;

    private readonly Dictionary<CheckStatus, long> _counts = [];
    private readonly Dictionary<string, (long Count, CheckStatus Status)> _reasons = new(StringComparer.Ordinal);
    private readonly List<ChartPoint> _points = [];
    private readonly List<MalformedLine> _malformed = [];
    private readonly Dictionary<Budgets, long> _budgets = [];
    private readonly Dictionary<CheckStatus, long> _unscored = [];
    private readonly List<string> _unscoredOk = [];

    public ResultsSummary(IReadOnlyList<Objective>? objectives = null, bool includeTrivial = false)
    {
        Objectives = objectives ?? [];
        IncludeTrivial = includeTrivial;
        ObjectiveMeasures = Objectives.Select(Measure.For).ToList();
        var fronts = new List<FrontSpec>
        {
            new("params-macs", "params and MACs", Measure.Params, Measure.Macs),
            new("params-latency", "params and latency p50", Measure.Params, Measure.Latency),
            new("macs-latency", "MACs and latency p50", Measure.Macs, Measure.Latency),
        };
        foreach (var (objective, measure) in Objectives.Zip(ObjectiveMeasures))
            foreach (var cost in new[] { Measure.Params, Measure.Macs, Measure.Latency })
                fronts.Add(new FrontSpec($"{measure.Key}-{cost.Key}", $"{objective.Name} ({objective.Direction}) and {cost.Label}", cost, measure));
        Fronts = fronts;
    }

    public IReadOnlyList<Objective> Objectives { get; }
    public IReadOnlyList<Measure> ObjectiveMeasures { get; }
    public bool IncludeTrivial { get; }

    public long Total { get; private set; }
    public long Cached { get; private set; }
    public long WithLatency { get; private set; }
    public long WithPrediction { get; private set; }
    public long MalformedCount { get; private set; }
    public IReadOnlyList<MalformedLine> Malformed => _malformed;

    /// <summary>Candidates with the trivial-cell note (no trainable op).</summary>
    public long Trivial { get; private set; }

    /// <summary>Trivial ok candidates that would have been on a front's input but were left out.</summary>
    public long TrivialLeftOut { get; private set; }

    /// <summary>Every candidate with params and MACs, in reading order.</summary>
    public IReadOnlyList<ChartPoint> Points => _points;

    /// <summary>Every front, in a fixed order: params/MACs, params/latency, MACs/latency, then each objective against params, MACs, latency.</summary>
    public IReadOnlyList<FrontSpec> Fronts { get; }

    public FrontSpec ParamsVsMacs => Fronts[0];
    public FrontSpec ParamsVsLatency => Fronts[1];
    public FrontSpec MacsVsLatency => Fronts[2];

    public FrontSpec Front(Measure x, Measure y) => Fronts.Single(f => f.X == x && f.Y == y);

    /// <summary>The budgets most records carry (null when none does); <see cref="BudgetSets"/> &gt; 1 when records disagree.</summary>
    public Budgets? Budgets => _budgets.OrderByDescending(b => b.Value).Select(b => b.Key).FirstOrDefault();

    public int BudgetSets => _budgets.Count;

    /// <summary>Records whose id the scores file has no line for, by status (counted only when scores were given).</summary>
    public long Unscored(CheckStatus status) => _unscored.GetValueOrDefault(status);

    public long UnscoredTotal => _unscored.Values.Sum();

    /// <summary>The first ok candidates without a score.</summary>
    public IReadOnlyList<string> UnscoredOk => _unscoredOk;

    /// <summary>Candidates with a value for each objective.</summary>
    public long WithObjective(int index) => _points.LongCount(p => p.Objectives is { } v && !double.IsNaN(v[index]));

    public long Count(CheckStatus status) => _counts.GetValueOrDefault(status);

    /// <summary>The most frequent reason kinds, most frequent first, then by name, with the status they were first seen with.</summary>
    public IReadOnlyList<(string Kind, long Count, CheckStatus Status)> TopReasons(int count) =>
        _reasons.OrderByDescending(kv => kv.Value.Count).ThenBy(kv => kv.Key, StringComparer.Ordinal)
            .Take(count).Select(kv => (kv.Key, kv.Value.Count, kv.Value.Status)).ToList();

    public int ReasonKindCount => _reasons.Count;

    /// <summary>Counts a row; <paramref name="scored"/> is false when scores were given and none joined this row.</summary>
    public void Add(ResultRow row, bool? scored = null)
    {
        Total++;
        if (row.Cached) Cached++;
        if (row.Trivial) Trivial++;
        _counts[row.Status] = Count(row.Status) + 1;
        if (row.Budgets is { } budgets) _budgets[budgets] = _budgets.GetValueOrDefault(budgets) + 1;
        if (scored == false)
        {
            _unscored[row.Status] = _unscored.GetValueOrDefault(row.Status) + 1;
            if (row.Status == CheckStatus.Ok && _unscoredOk.Count < UnjoinedListed) _unscoredOk.Add(row.Id);
        }
        if (row.ReasonKind is { } kind)
            _reasons[kind] = _reasons.TryGetValue(kind, out var seen) ? (seen.Count + 1, seen.Status) : (1, row.Status);
        if (row.LatencyMs is not null) WithLatency++;
        if (row.LatencyMs is not null && row.LatencyPredictedMs is not null) WithPrediction++;
        if (row.Params is not { } parameters || row.Macs is not { } macs) return;

        var objectives = Objectives.Count == 0 ? null : row.Objectives.Select(v => v ?? double.NaN).ToArray();
        var point = new ChartPoint(parameters, macs, row.LatencyMs ?? double.NaN, row.Status,
            row.LatencyPredictedMs ?? double.NaN, row.Trivial, objectives);
        _points.Add(point);
        if (row.Status != CheckStatus.Ok) return;
        if (row.Trivial && !IncludeTrivial)
        {
            TrivialLeftOut++;
            return;
        }
        foreach (var front in Fronts) front.Add(row.Id, point);
    }

    public void AddMalformed(MalformedLine line)
    {
        MalformedCount++;
        if (_malformed.Count < MalformedListed) _malformed.Add(line);
    }
}
