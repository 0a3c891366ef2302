using System.Collections.Concurrent;
using CellCompiler.Input;
using CellCompiler.Io;
using CellCompiler.Lowering;

namespace CellCompiler.Prediction;

/// <summary>
/// Predicts a candidate's CPU latency at batch 1 from a latency table: the sum over its units
/// (<see cref="UnitCounts"/>) of count x time. Units the table lacks are measured on first use
/// (<see cref="MeasureMissing"/>, one unit at a time whatever the number of workers) and added to the
/// table file, merged under its lock with what other processes added meanwhile. Thread-safe.
/// A prediction holds only for the machine, runtime, threads and session settings of the table;
/// <see cref="Open"/> refuses a table made under other conditions.
/// </summary>
public sealed class LatencyPredictor
{
    private readonly string? _path;
    private readonly UnitMeter _meter;
    private readonly Action<string> _warning;
    private readonly Lock _measuring = new();
    private readonly ConcurrentDictionary<string, NetworkFrame> _frames = new(StringComparer.Ordinal);
    private volatile LatencyTable _table;
    private bool _saveFailed;

    private LatencyPredictor(LatencyTable table, string? path, UnitMeter meter, Action<string>? warning)
    {
        _table = table;
        _path = path;
        _meter = meter;
        _warning = warning ?? (_ => { });
    }

    /// <summary>The table as it is now (with the units measured so far).</summary>
    public LatencyTable Table => _table;

    public string? Path => _path;

    /// <summary>Reads the table and refuses it unless it was made under <paramref name="here"/>.</summary>
    /// <exception cref="InputException">no such file, a damaged file, or other conditions</exception>
    public static LatencyPredictor Open(string path, TableConditions here, Action<string>? warning = null)
    {
        if (!File.Exists(path))
            throw new InputException(path, "", "no such latency table; make one on this machine with cellc calibrate -o " + path);
        var table = LatencyTableFile.Read(path);
        RequireConditions(table, here, path);
        return new LatencyPredictor(table, path, MeterFor(table, here.Threads, here.Opset), warning);
    }

    /// <summary>A predictor over a table in memory only (units measured on first use are not saved).</summary>
    public static LatencyPredictor InMemory(LatencyTable table) =>
        new(table, null, MeterFor(table, table.Conditions.Threads, table.Conditions.Opset), null);

    /// <summary>Units measured on first use are put on the table's scale by its anchor (a table without one gets one before its first such unit).</summary>
    private static UnitMeter MeterFor(LatencyTable table, int threads, int opset)
    {
        var meter = new UnitMeter(threads, opset);
        if (table.Find(AnchorUnit.Instance) is { } anchor) meter.UseAnchor(anchor.Ms);
        return meter;
    }

    public static void RequireConditions(LatencyTable table, TableConditions here, string path)
    {
        var differences = table.Conditions.Differences(here);
        if (differences.Count == 0) return;
        throw new InputException(path, differences.Select(d => new InputProblem("conditions." + d.Field,
            d.Problem + ". A prediction holds only under the conditions its table was calibrated under; calibrate a table for these (cellc calibrate)")).ToList());
    }

    /// <summary>The frame of a skeleton, worked out once per skeleton.</summary>
    public NetworkFrame FrameOf(Skeleton skeleton) => _frames.GetOrAdd(skeleton.ToJson(), _ => NetworkFrame.Of(skeleton));

    /// <summary>The units of a candidate (no table look-up, no measurement).</summary>
    public UnitCounts Count(Genotype genotype, Liveness liveness, Skeleton skeleton) => UnitCounts.Of(genotype, liveness, FrameOf(skeleton));

    /// <summary>The units of <paramref name="counts"/> the table does not hold yet.</summary>
    public IReadOnlyList<LatencyUnit> Missing(UnitCounts counts)
    {
        var table = _table;
        return counts.Items.Select(i => i.Unit).Where(u => !table.Contains(u)).DistinctBy(u => u.Key).ToList();
    }

    /// <summary>
    /// The predicted latency in ms: the sum of the units' times, through the table's whole-network
    /// fit when it has one for this skeleton (one table may hold several skeletons' units, and one fit). Every unit must be in the table (see <see cref="MeasureMissing"/>).
    /// </summary>
    public double Sum(UnitCounts counts)
    {
        var table = _table;
        var ms = UnitSum(table, counts);
        return Math.Round(table.Fit is { } fit && fit.Skeleton == counts.SkeletonJson ? fit.Apply(ms) : ms, 4);
    }

    /// <summary>The plain sum of the units' times (what the fit is fitted to).</summary>
    public static double UnitSum(LatencyTable table, UnitCounts counts)
    {
        double ms = 0;
        foreach (var (unit, count) in counts.Items)
        {
            var time = table.Find(unit) ?? throw new InvalidOperationException($"the latency table has no entry for {unit.Key}");
            ms += count * time.Ms;
        }
        return ms;
    }

    /// <summary>Counts, measures what is missing, and sums: for callers that need no gate around the measurement.</summary>
    public double Predict(Genotype genotype, Liveness liveness, Skeleton skeleton)
    {
        var counts = Count(genotype, liveness, skeleton);
        MeasureMissing(Missing(counts), skeleton);
        return Sum(counts);
    }

    /// <summary>
    /// Measures the units the table lacks and adds them to it (and to its file). A missing frame unit
    /// (stem, reduction, head, run) is measured with the frame of <paramref name="skeleton"/>.
    /// </summary>
    public void MeasureMissing(IReadOnlyList<LatencyUnit> units, Skeleton skeleton)
    {
        if (units.Count == 0) return;
        lock (_measuring)
        {
            if (!_meter.HasAnchor) SettleAnchor();
            var measured = new List<KeyValuePair<string, UnitTime>>();
            var frameMeasured = false;
            foreach (var unit in units)
            {
                if (_table.Contains(unit) || measured.Any(m => m.Key == unit.Key)) continue;
                switch (unit)
                {
                    case PrimitiveUnit or MergeUnit:
                        measured.Add(new(unit.Key, _meter.MeasureChain(unit)));
                        break;
                    case StemUnit or ReductionUnit or HeadUnit or RunUnit when !frameMeasured:
                        frameMeasured = true;
                        foreach (var (part, time) in _meter.MeasureFrame(FrameOf(skeleton)))
                            if (!_table.Contains(part)) measured.Add(new(part.Key, time));
                        break;
                    case StemUnit or ReductionUnit or HeadUnit or RunUnit:
                        break;
                    default:
                        throw new InvalidOperationException($"unknown unit {unit.GetType().Name}");
                }
            }
            Save(measured);
        }
    }

    /// <summary>
    /// Gives a table without an anchor one before its first unit is measured: through its file, under the
    /// file's lock, so that processes sharing the table agree on it (<see cref="AnchorSettlement"/>); in
    /// memory when there is no file or it cannot be written.
    /// </summary>
    private void SettleAnchor()
    {
        if (_path is not null && !_saveFailed)
        {
            try
            {
                var (file, _) = AnchorSettlement.Settle(_path, _table.Conditions, _meter);
                _table = file.With(_table.Units, replace: false);
                return;
            }
            catch (OutputException e)
            {
                _saveFailed = true;
                _warning($"the units measured on first use are kept for this run only: {e.Message}");
            }
        }
        _table = AnchorSettlement.Settle(_table, _meter).Table;
    }

    /// <summary>Adds entries to the table, and to its file when there is one (a file that cannot be written is warned about once).</summary>
    private void Save(List<KeyValuePair<string, UnitTime>> measured)
    {
        var inMemory = _table.With(measured, replace: false);
        if (_path is null || _saveFailed)
        {
            _table = inMemory;
            return;
        }
        try
        {
            _table = LatencyTableFile.Update(_path, current =>
            {
                if (current is null) return inMemory;
                RequireConditions(current, _table.Conditions, _path);
                // Ours first, then everything the file gained from other processes meanwhile; the file's own entries win.
                return current.With(inMemory.Units, replace: false);
            });
        }
        catch (OutputException e)
        {
            _saveFailed = true;
            _table = inMemory;
            _warning($"the units measured on first use are kept for this run only: {e.Message}");
        }
    }
}
