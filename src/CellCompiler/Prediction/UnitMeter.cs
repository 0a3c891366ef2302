using System.Globalization;
using CellCompiler.Graph;
using CellCompiler.Runtime;

namespace CellCompiler.Prediction;

/// <summary>
/// How calibration times a probe: <see cref="Rounds"/> rounds, each timing every probe of a unit one
/// after the other (<see cref="Warmup"/> untimed runs, then <see cref="Runs"/> timed runs), so that
/// all see the same background. A probe's time is the <see cref="Quantile"/> of all its timed runs:
/// a low quantile rather than the median, because a run that another program interrupts only ever
/// gets slower, so on a busy machine the low quantile still reads the undisturbed time (on a quiet
/// machine the two differ by a few percent; see the README's accuracy figures). Whole networks for
/// the fit (<see cref="NetworkFit"/>) get <see cref="NetworkRounds"/> rounds at the same quantile.
/// </summary>
public sealed record CalibrationSettings(int Rounds = 7, int Warmup = 5, int Runs = 40, int Copies = 8, double Quantile = 0.1, int NetworkRounds = 3)
{
    public static readonly CalibrationSettings Default = new();
}

/// <summary>Measures units on ONNX Runtime under the session settings of `bench` (<see cref="LatencyMeter"/>).</summary>
public sealed class UnitMeter(int threads, int opset, CalibrationSettings? settings = null)
{
    private readonly CalibrationSettings _settings = settings ?? CalibrationSettings.Default;

    public int Threads => threads;
    public int Opset => opset;

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
        var times = Time([shortBytes, longBytes]);
        var ms = (times[1] - times[0]) / copies;
        var how = string.Create(CultureInfo.InvariantCulture,
            $"chains of {shortLength} and {shortLength + copies}: {Quantile} of {Ms(times[0])} and {Ms(times[1])} ms");
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
        var total = Time([bytes])[0];

        var profile = KernelProfile.Collect(bytes, 1, threads, _settings.Warmup, _settings.Runs * _settings.Rounds);
        var kernelMs = new Dictionary<NetworkPart, double>();
        foreach (var (node, micros) in profile.MicrosecondsByNode)
        {
            var part = NodePath.PartOf(node);
            kernelMs[part] = kernelMs.GetValueOrDefault(part) + micros / 1000 / profile.Runs;
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
            $"frame of {Ms(total)} ms ({Quantile}) split by profiled kernel time");
        var now = DateTimeOffset.UtcNow;
        var result = parts.Select(p => (p.Unit, new UnitTime(Round(p.Ms * scale), how, now, load))).ToList();
        result.Add((RunUnit.Instance, new UnitTime(Round(Math.Max(0, total - inParts * scale)), how, now, load)));
        return result;
    }

    /// <summary>
    /// A whole network's time at batch 1 over <see cref="CalibrationSettings.NetworkRounds"/> rounds of
    /// the usual warm-up and timed runs, at the units' low quantile: like them, the undisturbed time.
    /// </summary>
    public double MeasureNetwork(byte[] model) => Time([model], _settings.NetworkRounds, _settings.Quantile)[0];

    /// <summary>The quantile probes are timed at, in words ("10th percentile").</summary>
    public string QuantileName => Quantile;

    private string Quantile => _settings.Quantile == 0.5 ? "median" : $"{_settings.Quantile * 100:0}th percentile";

    /// <summary>Each model's time at batch 1: the quantile of its runs over all rounds, the models timed in turn within each round.</summary>
    private double[] Time(IReadOnlyList<byte[]> models) => Time(models, _settings.Rounds, _settings.Quantile);

    private double[] Time(IReadOnlyList<byte[]> models, int rounds, double quantile)
    {
        var sessions = new List<Microsoft.ML.OnnxRuntime.InferenceSession>();
        try
        {
            foreach (var model in models) sessions.Add(LatencyMeter.OpenSession(model, threads));
            var runs = sessions.Select(_ => new List<double>(rounds * _settings.Runs)).ToList();
            for (var r = 0; r < rounds; r++)
                for (var i = 0; i < sessions.Count; i++)
                    runs[i].AddRange(LatencyMeter.TimeRuns(sessions[i], 1, _settings.Warmup, _settings.Runs));
            return runs.Select(times => LatencyStats.Percentile([.. times.Order()], quantile)).ToArray();
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
