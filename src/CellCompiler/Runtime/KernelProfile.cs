using System.Text.Json;
using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Runtime;

/// <summary>Kernel time per graph node, summed over profiled runs, from ONNX Runtime's profiler.</summary>
public sealed record KernelProfile(IReadOnlyDictionary<string, double> MicrosecondsByNode, IReadOnlyDictionary<string, string> OpTypeByNode, int Runs)
{
    public double TotalMicroseconds => MicrosecondsByNode.Values.Sum();

    /// <summary>Profiles <paramref name="runs"/> runs at a batch size (after warm-up runs) and reads the trace the runtime writes.</summary>
    public static KernelProfile Collect(byte[] model, int batch, int threads, int warmup, int runs)
    {
        var folder = Directory.CreateTempSubdirectory("cellc-profile-");
        try
        {
            using var options = LatencyMeter.SessionOptionsFor(threads, Path.Combine(folder.FullName, "trace"));
            using var session = new InferenceSession(model, options);
            LatencyMeter.RunBound(session, batch, warmup + runs);
            var trace = session.EndProfiling();
            var path = Path.IsPathRooted(trace) ? trace : Path.Combine(Environment.CurrentDirectory, trace);
            try { return Parse(File.ReadAllBytes(path), warmup + runs); }
            finally { Io.AtomicFile.TryDelete(path); } // read once; never left behind, wherever the runtime put it
        }
        finally
        {
            try { folder.Delete(recursive: true); } catch (IOException) { }
        }
    }

    /// <summary>Reads "Node" events named "NAME_kernel_time" from a trace (a JSON array of events with durations in microseconds).</summary>
    public static KernelProfile Parse(byte[] traceJson, int runs)
    {
        var times = new Dictionary<string, double>(StringComparer.Ordinal);
        var types = new Dictionary<string, string>(StringComparer.Ordinal);
        using var document = JsonDocument.Parse(traceJson);
        foreach (var e in document.RootElement.EnumerateArray())
        {
            if (!e.TryGetProperty("cat", out var cat) || cat.GetString() != "Node") continue;
            var name = e.GetProperty("name").GetString() ?? "";
            const string suffix = "_kernel_time";
            if (!name.EndsWith(suffix, StringComparison.Ordinal)) continue;
            var node = name[..^suffix.Length];
            times[node] = times.GetValueOrDefault(node) + e.GetProperty("dur").GetDouble();
            if (e.TryGetProperty("args", out var args) && args.TryGetProperty("op_name", out var op))
                types[node] = op.GetString() ?? "";
        }
        return new KernelProfile(times, types, runs);
    }
}
