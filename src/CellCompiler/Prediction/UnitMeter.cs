using System.Globalization;
using CellCompiler.Graph;
using CellCompiler.Runtime;

namespace CellCompiler.Prediction;

/// <summary>
/// How calibration times a probe: in <see cref="Sessions"/> fresh ONNX Runtime sessions, each for
/// <see cref="Rounds"/> rounds that time every probe of a unit one after the other
/// (<see cref="Warmup"/> untimed runs, then <see cref="Runs"/> timed runs), so that all see the same
/// background. Within a session a probe's time is the <see cref="Quantile"/> of its timed runs: a low
/// quantile rather than the median, because a run that another program interrupts only ever gets
/// slower. Across sessions it is the median: on this project's virtual machine the same model timed
/// in fresh sessions of one process read up to 20% apart (a session's buffers land differently in
/// memory), so one session's figure can be far off and a median of three is not. Whole networks for
/// the fit (<see cref="NetworkFit"/>) get <see cref="NetworkSessions"/> sessions of one round each,
/// read at <see cref="NetworkQuantile"/>, the median: the fit maps the units' undisturbed sum onto
/// the statistic `bench` and `check --latency` report (their p50), so a prediction estimates that
/// figure and not a faster one (a network's p50 ran 5 to 9% above its fastest run here).
/// </summary>
public sealed record CalibrationSettings(int Sessions = 3, int Rounds = 3, int Warmup = 5, int Runs = 40, int Copies = 8, double Quantile = 0.1,
    int NetworkSessions = 3, double NetworkQuantile = 0.5)
{
    public static readonly CalibrationSettings Default = new();
}

/// <summary>
/// Measures units on ONNX Runtime under the session settings of `bench` (<see cref="LatencyMeter"/>).
/// Every probe is timed beside the anchor (<see cref="AnchorUnit"/>) in the same sessions and rounds,
/// and scaled by the anchor's reference time (the table's, see <see cref="AnchorSettlement"/>) over its
/// time now, so that units measured minutes or days apart, while the machine ran faster or slower,
/// share one scale. Not thread-safe: one caller at a time (calibration, or a predictor under its lock).
/// </summary>
public sealed class UnitMeter(int threads, int opset, CalibrationSettings? settings = null)
{
    private readonly CalibrationSettings _settings = settings ?? CalibrationSettings.Default;
    private readonly Lazy<byte[]> _anchor = new(() => ProbeNetworks.Anchor(opset));
    private double? _anchorMs;

    public int Threads => threads;
    public int Opset => opset;

    /// <summary>Whether the meter has an anchor reference to scale to (<see cref="UseAnchor"/>).</summary>
    public bool HasAnchor => _anchorMs is not null;

    /// <summary>Scales every later measurement to this reference time of the anchor (a table's entry, above 0).</summary>
    public void UseAnchor(double ms)
    {
        if (!(ms > 0) || !double.IsFinite(ms)) throw new ArgumentOutOfRangeException(nameof(ms), ms, "an anchor time must be above 0");
        _anchorMs = ms;
    }

    /// <summary>
    /// Times the anchor as every reading of it is timed (the unit probes' sessions and rounds, its
    /// quantile), makes that the reference and returns it as a table entry.
    /// </summary>
    public UnitTime MeasureAnchor()
    {
        var load = SystemLoad.OneMinute();
        var ms = Round(TimeTogether([_anchor.Value], _settings.Sessions, _settings.Rounds, _ => _settings.Quantile)[0]);
        UseAnchor(ms);
        return new UnitTime(ms, string.Create(CultureInfo.InvariantCulture,
            $"{Quantile} of {_settings.Rounds} rounds x {_settings.Runs} runs, median of {_settings.Sessions} sessions; the reference every unit is scaled to"),
            DateTimeOffset.UtcNow, load);
    }

    /// <summary>A primitive's or a merge's time: the difference between a long and a short chain of it, per extra copy.</summary>
    public UnitTime MeasureChain(LatencyUnit unit)
    {
        var copies = _settings.Copies;
        var (shortBytes, longBytes, shortLength) = unit switch
        {
            PrimitiveUnit p => (ProbeNetworks.PrimitiveChain(p, 1, opset), ProbeNetworks.PrimitiveChain(p, 1 + copies, opset), 1),
            // Start where every merge already reads distinct tensors.
            MergeUnit m => (ProbeNetworks.MergeChain(m, m.FanIn, opset), ProbeNetworks.MergeChain(m, m.FanIn + copies, opset), m.FanIn),
            _ => throw new InvalidOperationException($"{unit.Key} is not measured as a chain"),
        };
        var load = SystemLoad.OneMinute();
        var times = Time([shortBytes, longBytes], _settings.Sessions, _settings.Rounds, _settings.Quantile, out var scale);
        var ms = (times[1] - times[0]) / copies;
        var how = string.Create(CultureInfo.InvariantCulture,
            $"chains of {shortLength} and {shortLength + copies}: {Quantile} of {Ms(times[0])} and {Ms(times[1])} ms (median of {_settings.Sessions} sessions; x{scale:0.000} for the anchor)");
        return new UnitTime(Round(Math.Max(0, ms)), how, DateTimeOffset.UtcNow, load);
    }

    /// <summary>
    /// The frame of a skeleton (stem, reductions, head, no cells), timed whole and split by ONNX
    /// Runtime's profiler: each part gets its kernels' time, and what no part's kernel took (the
    /// executor, the reorders at the ends) is the per-run unit.
    /// </summary>
    public IReadOnlyList<(LatencyUnit Unit, UnitTime Time)> MeasureFrame(NetworkFrame frame)
    {
        var bytes = ProbeNetworks.Frame(frame.Skeleton, opset);
        var load = SystemLoad.OneMinute();
        var total = Time([bytes], _settings.Sessions, _settings.Rounds, _settings.Quantile, out var anchorScale)[0];

        var profile = KernelProfile.Collect(bytes, 1, threads, _settings.Warmup, _settings.Runs * _settings.Rounds * _settings.Sessions);
        var kernelMs = new Dictionary<NetworkPart, double>();
        foreach (var (node, micros) in profile.MicrosecondsByNode)
        {
            var part = NodePath.PartOf(node);
            // Profiled now, so on the anchor's scale like the total.
            kernelMs[part] = kernelMs.GetValueOrDefault(part) + micros / 1000 / profile.Runs * anchorScale;
        }
        var parts = new List<(LatencyUnit Unit, double Ms)>
        {
            (frame.Stem, kernelMs.GetValueOrDefault(new NetworkPart(NetworkPartKind.Stem))),
        };
        for (var t = 0; t < frame.Reductions.Count; t++)
            parts.Add((frame.Reductions[t], kernelMs.GetValueOrDefault(new NetworkPart(NetworkPartKind.Reduction, t))));
        parts.Add((frame.Head, kernelMs.GetValueOrDefault(new NetworkPart(NetworkPartKind.Head))));
        var inParts = parts.Sum(p => p.Ms);
        // Profiled kernels (mean times, profiler on) can add up to more than the frame's run; the parts then share its time.
        var scale = inParts > total ? total / inParts : 1;
        var how = string.Create(CultureInfo.InvariantCulture,
            $"frame of {Ms(total)} ms ({Quantile}, median of {_settings.Sessions} sessions; x{anchorScale:0.000} for the anchor) split by profiled kernel time");
        var now = DateTimeOffset.UtcNow;
        var result = parts.Select(p => (p.Unit, new UnitTime(Round(p.Ms * scale), how, now, load))).ToList();
        result.Add((RunUnit.Instance, new UnitTime(Round(Math.Max(0, total - inParts * scale)), how, now, load)));
        return result;
    }

    /// <summary>
    /// A whole network's time at batch 1: the median over <see cref="CalibrationSettings.NetworkSessions"/>
    /// sessions of one round of the usual warm-up and timed runs, each read at <see cref="CalibrationSettings.NetworkQuantile"/>.
    /// </summary>
    public double MeasureNetwork(byte[] model) => Time([model], _settings.NetworkSessions, 1, _settings.NetworkQuantile, out _)[0];

    /// <summary>The quantile whole networks are timed at, in words ("median").</summary>
    public string NetworkQuantileName => QuantileName(_settings.NetworkQuantile);

    private string Quantile => QuantileName(_settings.Quantile);

    private static string QuantileName(double quantile) => quantile == 0.5 ? "median" : $"{quantile * 100:0}th percentile";

    /// <summary>
    /// Each model's time at batch 1 on the table's scale: timed beside the anchor (the anchor read at the
    /// units' quantile) and multiplied by <paramref name="scale"/>, the anchor's reference time over its time now.
    /// </summary>
    private double[] Time(IReadOnlyList<byte[]> models, int sessions, int rounds, double quantile, out double scale)
    {
        var reference = _anchorMs ?? throw new InvalidOperationException("no anchor reference: settle the table's anchor first (AnchorSettlement)");
        var figures = TimeTogether([_anchor.Value, .. models], sessions, rounds, i => i == 0 ? _settings.Quantile : quantile);
        var factor = figures[0] > 0 ? reference / figures[0] : 1;
        scale = factor;
        return figures[1..].Select(t => t * factor).ToArray();
    }

    /// <summary>
    /// The time at batch 1 of each model, all timed in turn within each round: the median over
    /// <paramref name="sessions"/> fresh sessions of the model's quantile (<paramref name="quantileOf"/> its
    /// index) of its runs in that session.
    /// </summary>
    private double[] TimeTogether(IReadOnlyList<byte[]> models, int sessions, int rounds, Func<int, double> quantileOf)
    {
        var perSession = models.Select(_ => new List<double>(sessions)).ToList();
        for (var s = 0; s < sessions; s++)
        {
            var times = TimeInOneSession(models, rounds);
            for (var i = 0; i < models.Count; i++) perSession[i].Add(LatencyStats.Percentile([.. times[i].Order()], quantileOf(i)));
        }
        return perSession.Select(figures => LatencyStats.Percentile([.. figures.Order()], 0.5)).ToArray();
    }

    private List<double>[] TimeInOneSession(IReadOnlyList<byte[]> models, int rounds)
    {
        var sessions = new List<Microsoft.ML.OnnxRuntime.InferenceSession>();
        try
        {
            foreach (var model in models) sessions.Add(LatencyMeter.OpenSession(model, threads));
            var runs = sessions.Select(_ => new List<double>(rounds * _settings.Runs)).ToArray();
            for (var r = 0; r < rounds; r++)
                for (var i = 0; i < sessions.Count; i++)
                    runs[i].AddRange(LatencyMeter.TimeRuns(sessions[i], 1, _settings.Warmup, _settings.Runs));
            return runs;
        }
        finally
        {
            foreach (var session in sessions) session.Dispose();
        }
    }

    private static double Round(double ms) => Math.Round(ms, 6);

    private static string Ms(double ms) => ms.ToString("0.0000", CultureInfo.InvariantCulture);
}

/// <summary>The machine's 1-minute load average (Linux /proc/loadavg), recorded with each measurement; null where unknown.</summary>
public static class SystemLoad
{
    public static double? OneMinute()
    {
        try
        {
            if (!File.Exists("/proc/loadavg")) return null;
            var first = File.ReadAllText("/proc/loadavg").Split(' ')[0];
            return double.TryParse(first, NumberStyles.Float, CultureInfo.InvariantCulture, out var load) ? load : null;
        }
        catch (IOException) { return null; }
        catch (UnauthorizedAccessException) { return null; }
    }
}
