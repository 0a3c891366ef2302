using System.Diagnostics;
using System.Globalization;
using CellCompiler.Compilation;
using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Sampling;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>What `cellc calibrate` is asked to measure: every unit a network of the skeleton can contain.</summary>
/// <param name="FitNetworks">Whole networks measured for the table's <see cref="NetworkFit"/>; 0 fits none.</param>
public sealed record CalibrationRequest(Skeleton Skeleton, PrimitiveTable Primitives, int MaxFanIn, int Threads, int Opset,
    int FitNetworks = CalibrationRequest.DefaultFitNetworks)
{
    /// <summary>Fan-ins calibrated up front by default; a node with more inputs is measured on first use.</summary>
    public const int DefaultMaxFanIn = 6;

    /// <summary>Enough points for a steady ratio over sizes from small to large cells (12 gave lines that moved between calibrations), at under a second each for proxy.</summary>
    public const int DefaultFitNetworks = 24;
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
        // A table keeps its first anchor, so that its entries share one scale (a table from before anchors gets one now; its
        // older entries were not measured against it, which the README says: calibrate such a table anew).
        var (table, newAnchor) = AnchorSettlement.Settle(path, here, meter);
        var steps = plan.Count + Math.Max(0, request.FitNetworks) + (newAnchor is null ? 0 : 1);
        var done = 0;
        if (newAnchor is not null) progress(new CalibrationStep(++done, steps, AnchorUnit.Instance.Key, newAnchor.Ms, clock.Elapsed, newAnchor.Load));

        void Store(IReadOnlyList<(LatencyUnit Unit, UnitTime Time)> measured)
        {
            table = LatencyTableFile.Update(path, current =>
            {
                if (current is not null) LatencyPredictor.RequireConditions(current, here, path);
                // An earlier fit does not hold for units measured again: it goes with the first of them (an interrupted
                // calibration then leaves no stale fit), and the fit of this calibration is written at its end.
                return (current ?? new LatencyTable(here, [])).With(measured.Select(m => new KeyValuePair<string, UnitTime>(m.Unit.Key, m.Time)), replace: true)
                    .WithFit(null);
            });
            foreach (var (unit, time) in measured)
                progress(new CalibrationStep(++done, steps, unit.Key, time.Ms, clock.Elapsed, time.Load));
        }

        Store(meter.MeasureFrame(frame));
        foreach (var unit in plan.Where(u => u is PrimitiveUnit or MergeUnit))
            Store([(unit, meter.MeasureChain(unit))]);

        var fit = Fit(table!, request, frame, meter, (label, ms, load) =>
            progress(new CalibrationStep(++done, steps, label, ms, clock.Elapsed, load)));
        table = LatencyTableFile.Update(path, current => (current ?? table!).WithFit(fit));
        return table;
    }

    /// <summary>The seed of the fit's networks: fixed, so that calibrating twice measures the same networks.</summary>
    public const long FitSeed = 7_001;

    /// <summary>
    /// Measures <see cref="CalibrationRequest.FitNetworks"/> whole networks of the skeleton and fits the
    /// ratio of their measured time to their units' sum. The networks are sampled as `cellc sample`
    /// does with --levels 4,5 --motifs 6,1 (4-node motifs, six of them, under a 5-node cell; fewer nodes when
    /// --max-fan-in is under 4) over the calibrated primitives and identity; dead cells, networks that cannot be formed and networks with units the table lacks
    /// are passed over. Null when fewer than <see cref="NetworkFit.MinNetworks"/> were measured or no
    /// positive ratio fits them.
    /// </summary>
    public static NetworkFit? Fit(LatencyTable table, CalibrationRequest request, NetworkFrame frame, UnitMeter meter,
        Action<string, double, double?> progress)
    {
        if (request.FitNetworks <= 0) return null;
        // A node of an n-node motif merges at most n - 1 inputs: keep within the calibrated fan-ins.
        var most = request.MaxFanIn + 1;
        var sampler = new GenotypeSampler([Math.Min(4, most), Math.Min(5, most)], [6, 1], seed: FitSeed, primitives: request.Primitives);
        var points = new List<(double UnitSum, double MeasuredMs)>();
        var load = SystemLoad.OneMinute();
        for (long n = 1; points.Count < request.FitNetworks && n <= 20L * request.FitNetworks; n++)
        {
            var genotype = sampler.Sample(n, $"fit-{n}");
            var liveness = Liveness.Analyse(genotype);
            if (!liveness.Cell(genotype).OutputIsLive) continue;
            var counts = UnitCounts.Of(genotype, liveness, frame);
            if (counts.Items.Any(item => !table.Contains(item.Unit))) continue;
            byte[] model;
            try { model = Compiler.Compile(genotype, request.Skeleton, new CompileOptions(Opset: request.Opset)).OnnxBytes; }
            catch (Exception e) when (e is CompileException or DeadCellException) { continue; }
            var unitSum = LatencyPredictor.UnitSum(table, counts);
            var measured = meter.MeasureNetwork(model);
            points.Add((unitSum, measured));
            progress(string.Create(CultureInfo.InvariantCulture, $"network {points.Count} of the fit (units sum to {unitSum:0.0000} ms)"), measured,
                SystemLoad.OneMinute());
        }
        if (NetworkFit.Line(points) is not { } line) return null;
        var how = string.Create(CultureInfo.InvariantCulture,
            $"least squares of the relative error, through 0, of {points.Count} sampled networks' time ({meter.NetworkQuantileName}) on their units' sum (seed {FitSeed})");
        return new NetworkFit(Math.Round(line.Intercept, 6), Math.Round(line.Slope, 6), points.Count, Math.Round(line.MeanAbsoluteErrorPercent, 3),
            how, DateTimeOffset.UtcNow, load, request.Skeleton.ToJson());
    }
}
