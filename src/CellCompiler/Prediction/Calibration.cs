using System.Diagnostics;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>What `cellc calibrate` is asked to measure: every unit a network of the skeleton can contain.</summary>
public sealed record CalibrationRequest(Skeleton Skeleton, PrimitiveTable Primitives, int MaxFanIn, int Threads, int Opset)
{
    /// <summary>Fan-ins calibrated up front by default; a node with more inputs is measured on first use.</summary>
    public const int DefaultMaxFanIn = 6;
}

/// <summary>One step of a calibration, for progress displays.</summary>
public sealed record CalibrationStep(int Done, int Total, string Unit, double Ms, TimeSpan Elapsed, double? Load)
{
    /// <summary>Time left at the pace so far.</summary>
    public TimeSpan Remaining => Done == 0 ? TimeSpan.Zero : Elapsed / Done * (Total - Done);
}

/// <summary>
/// Calibration: the units of a skeleton (the frame; each primitive, built-in and declared, at each
/// stage's site; the skeleton's merge at each stage for fan-in 2 to the maximum), each measured by
/// <see cref="UnitMeter"/> and written to the table file as soon as it is measured, replacing an older
/// entry of the same unit and keeping every other entry. An existing table made under other
/// conditions is refused before anything is measured.
/// </summary>
public static class Calibration
{
    public static IReadOnlyList<LatencyUnit> Plan(CalibrationRequest request)
    {
        var frame = NetworkFrame.Of(request.Skeleton);
        var definitions = request.Primitives.Names.Select(request.Primitives.Get).Distinct().ToList();
        var units = new List<LatencyUnit>(frame.Units);
        foreach (var site in frame.Stages.Distinct())
        {
            units.AddRange(definitions.Select(d => new PrimitiveUnit(d, site)));
            for (var k = 2; k <= request.MaxFanIn; k++)
                units.Add(new MergeUnit(request.Skeleton.Merge, k, site));
        }
        return units;
    }

    /// <exception cref="InputException">the file holds a table made under other conditions, or is damaged</exception>
    public static LatencyTable Run(string path, CalibrationRequest request, Action<CalibrationStep> progress)
    {
        var here = TableConditions.Here(request.Threads, request.Opset);
        if (File.Exists(path)) LatencyPredictor.RequireConditions(LatencyTableFile.Read(path), here, path);
        var frame = NetworkFrame.Of(request.Skeleton);
        var plan = Plan(request);
        var meter = new UnitMeter(request.Threads, request.Opset);
        var clock = Stopwatch.StartNew();
        LatencyTable? table = null;
        var done = 0;

        void Store(IReadOnlyList<(LatencyUnit Unit, UnitTime Time)> measured)
        {
            table = LatencyTableFile.Update(path, current =>
            {
                if (current is not null) LatencyPredictor.RequireConditions(current, here, path);
                return (current ?? new LatencyTable(here, [])).With(measured.Select(m => new KeyValuePair<string, UnitTime>(m.Unit.Key, m.Time)), replace: true);
            });
            foreach (var (unit, time) in measured)
                progress(new CalibrationStep(++done, plan.Count, unit.Key, time.Ms, clock.Elapsed, time.Load));
        }

        Store(meter.MeasureFrame(frame));
        foreach (var unit in plan.Where(u => u is PrimitiveUnit or MergeUnit))
            Store([(unit, meter.MeasureChain(unit))]);
        return table!;
    }
}
