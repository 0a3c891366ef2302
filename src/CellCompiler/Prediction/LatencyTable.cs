using System.Collections.Concurrent;

namespace CellCompiler.Prediction;

/// <summary>
/// How one unit's time was found: its share in ms at batch 1 (at the calibration's quantile), how it was measured, when, and the
/// machine's 1-minute load average then (background load distorts calibration; the table keeps it).
/// </summary>
public sealed record UnitTime(double Ms, string How, DateTimeOffset Measured, double? Load);

/// <summary>
/// A latency table: the time of each unit (<see cref="LatencyUnit.Key"/> -> <see cref="UnitTime"/>)
/// measured under <see cref="Conditions"/>. Immutable; <see cref="With"/> gives a table with more
/// entries. Read and written only by <see cref="LatencyTableFile"/>.
/// </summary>
public sealed class LatencyTable
{
    private readonly SortedDictionary<string, UnitTime> _units;

    // Look-ups by unit (record equality), so that summing a candidate builds no key text: measured to
    // be most of a prediction's time otherwise. Valid for ever, since the table never changes.
    private readonly ConcurrentDictionary<LatencyUnit, UnitTime?> _found = new();

    public LatencyTable(TableConditions conditions, IEnumerable<KeyValuePair<string, UnitTime>> units, NetworkFit? fit = null)
    {
        Conditions = conditions;
        Fit = fit;
        _units = new SortedDictionary<string, UnitTime>(StringComparer.Ordinal);
        foreach (var (key, time) in units) _units[key] = time;
    }

    public TableConditions Conditions { get; }

    /// <summary>The whole-network correction fitted at calibration; null: predictions are the plain sum of units.</summary>
    public NetworkFit? Fit { get; }

    /// <summary>This table with <paramref name="fit"/> as its correction (null removes it).</summary>
    public LatencyTable WithFit(NetworkFit? fit) => new(Conditions, _units, fit);

    /// <summary>Every entry, in key order (the order the file holds them in).</summary>
    public IReadOnlyDictionary<string, UnitTime> Units => _units;

    public int Count => _units.Count;

    public UnitTime? Find(LatencyUnit unit) => _found.GetOrAdd(unit, u => _units.GetValueOrDefault(u.Key));

    public bool Contains(LatencyUnit unit) => Find(unit) is not null;

    /// <summary>
    /// This table plus <paramref name="added"/>. With <paramref name="replace"/> an added entry
    /// replaces one of the same key (a fresh calibration); without, the entry already here is kept,
    /// so that parallel processes that measured the same unit end with the same, first value.
    /// </summary>
    public LatencyTable With(IEnumerable<KeyValuePair<string, UnitTime>> added, bool replace)
    {
        var units = new SortedDictionary<string, UnitTime>(_units, StringComparer.Ordinal);
        foreach (var (key, time) in added)
            if (replace || !units.ContainsKey(key)) units[key] = time;
        return new LatencyTable(Conditions, units, Fit);
    }
}
