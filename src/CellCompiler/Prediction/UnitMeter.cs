using System.Globalization;
using CellCompiler.Graph;
using CellCompiler.Runtime;

namespace CellCompiler.Prediction;

/// <summary>
/// How calibration times a probe: <see cref="Rounds"/> rounds, each timing the short and the long
/// chain one after the other (<see cref="Warmup"/> untimed runs, then <see cref="Runs"/> timed runs,
/// p50, as `bench` does), so that both see the same background; a unit's time is the median over the
/// rounds of (long p50 - short p50) / <see cref="Copies"/>.
/// </summary>
public sealed record CalibrationSettings(int Rounds = 7, int Warmup = 5, int Runs = 40, int Copies = 8)
{
    public static readonly CalibrationSettings Default = new();
}

/// <summary>Measures units on ONNX Runtime under the session settings of `bench` (<see cref="LatencyMeter"/>).</summary>
public sealed class UnitMeter(int threads, int opset, CalibrationSettings? settings = null)
{
    private readonly CalibrationSettings _settings = settings ?? CalibrationSettings.Default;

    public int Threads => threads;
    public int Opset => opset;

    /// <summary>A primitive's or a merge's time, from the slope between a short and a long chain of it.</summary>
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
        using var shortSession = LatencyMeter.OpenSession(shortBytes, threads);
        using var longSession = LatencyMeter.OpenSession(longBytes, threads);
        var timing = new LatencySettings(threads, _settings.Warmup, _settings.Runs);
        var slopes = new double[_settings.Rounds];
        for (var r = 0; r < slopes.Length; r++)
        {
            var shortMs = LatencyMeter.MeasureSession(shortSession, 1, timing).P50Ms;
            var longMs = LatencyMeter.MeasureSession(longSession, 1, timing).P50Ms;
            slopes[r] = (longMs - shortMs) / copies;
        }
        Array.Sort(slopes);
        var median = LatencyStats.Percentile(slopes, 0.5);
        var how = string.Create(CultureInfo.InvariantCulture,
            $"chain of {shortLength} vs {shortLength + copies}, median of {slopes.Length} rounds (rounds {Ms(slopes[0])} to {Ms(slopes[^1])} ms)");
        return new UnitTime(Round(Math.Max(0, median)), how, DateTimeOffset.UtcNow, load);
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
        var timing = new LatencySettings(threads, _settings.Warmup, _settings.Runs);
        var rounds = new double[_settings.Rounds];
        using (var session = LatencyMeter.OpenSession(bytes, threads))
            for (var r = 0; r < rounds.Length; r++)
                rounds[r] = LatencyMeter.MeasureSession(session, 1, timing).P50Ms;
        Array.Sort(rounds);
        var total = LatencyStats.Percentile(rounds, 0.5);

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
        // The profiled kernels can add up to more than an unprofiled run when the machine is busy; the parts then share the run's time.
        var scale = inParts > total ? total / inParts : 1;
        var how = string.Create(CultureInfo.InvariantCulture,
            $"frame of {Ms(total)} ms (median of {rounds.Length} rounds, {Ms(rounds[0])} to {Ms(rounds[^1])} ms) split by profiled kernel time");
        var now = DateTimeOffset.UtcNow;
        var result = parts.Select(p => (p.Unit, new UnitTime(Round(p.Ms * scale), how, now, load))).ToList();
        result.Add((RunUnit.Instance, new UnitTime(Round(Math.Max(0, total - inParts * scale)), how, now, load)));
        return result;
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
