using System.Diagnostics;
using Microsoft.ML.OnnxRuntime;
using Microsoft.ML.OnnxRuntime.Tensors;

namespace CellCompiler.Runtime;

/// <summary>
/// Measures CPU inference latency with ONNX Runtime: graph optimizations on, a fixed number of
/// intra-op threads, inputs and outputs bound and allocated before timing so that only the run
/// itself is timed. CPU latency does not transfer to other hardware.
/// </summary>
public static class LatencyMeter
{
    public static SessionOptions SessionOptionsFor(int threads, string? profilePrefix = null)
    {
        NativeHeap.KeepFreedMemory();
        var options = new SessionOptions
        {
            IntraOpNumThreads = threads,
            InterOpNumThreads = 1,
            ExecutionMode = ExecutionMode.ORT_SEQUENTIAL,
            GraphOptimizationLevel = GraphOptimizationLevel.ORT_ENABLE_ALL,
            LogSeverityLevel = RuntimeLog.Level,
        };
        // Spinning threads would burn the cores of neighbouring work between runs.
        options.AddSessionConfigEntry("session.intra_op.allow_spinning", threads > 1 ? "1" : "0");
        if (profilePrefix is not null)
        {
            // The prefix first: enabling profiling starts the trace file under the prefix set at that moment.
            options.ProfileOutputPathPrefix = profilePrefix;
            options.EnableProfiling = true;
        }
        return options;
    }

    /// <summary>
    /// The settings of <see cref="SessionOptionsFor"/> in words, recorded with latency tables: a table
    /// made under other session settings is refused, so change this text whenever they change.
    /// </summary>
    public static string DescribeSession(int threads) =>
        $"graph optimizations all; sequential execution; 1 inter-op thread; {threads} intra-op; spinning {(threads > 1 ? "on" : "off")}; bound inputs and outputs";

    public static LatencyReport Measure(byte[] model, LatencySettings settings)
    {
        using var session = OpenSession(model, settings.Threads);
        var stats = settings.BatchSizes.Select(batch => MeasureBatch(session, batch, settings)).ToList();
        return new LatencyReport(stats, settings.Threads, MachineInfo.RuntimeVersion, MachineInfo.Processor);
    }

    /// <summary>A session with the measurement settings, for callers that time one model several times (calibration).</summary>
    public static InferenceSession OpenSession(byte[] model, int threads)
    {
        using var options = SessionOptionsFor(threads);
        return new InferenceSession(model, options);
    }

    /// <summary>The time of each of <paramref name="runs"/> runs of an open session, in ms, after <paramref name="warmup"/> untimed runs.</summary>
    public static double[] TimeRuns(InferenceSession session, int batch, int warmup, int runs) =>
        WithBinding(session, batch, (binding, runOptions, _) =>
        {
            for (var i = 0; i < warmup; i++) session.RunWithBinding(runOptions, binding);
            var times = new double[runs];
            for (var i = 0; i < runs; i++)
            {
                var start = Stopwatch.GetTimestamp();
                session.RunWithBinding(runOptions, binding);
                times[i] = (Stopwatch.GetTimestamp() - start) * 1000.0 / Stopwatch.Frequency;
            }
            return times;
        });

    /// <summary>Runs the session <paramref name="runs"/> times at a batch size with bound inputs and outputs; used by profiling too.</summary>
    public static void RunBound(InferenceSession session, int batch, int runs) =>
        WithBinding(session, batch, (binding, runOptions, _) =>
        {
            for (var i = 0; i < runs; i++) session.RunWithBinding(runOptions, binding);
            return 0;
        });

    private static LatencyStats MeasureBatch(InferenceSession session, int batch, LatencySettings settings) =>
        WithBinding(session, batch, (binding, runOptions, outputShape) =>
        {
            for (var i = 0; i < settings.Warmup; i++) session.RunWithBinding(runOptions, binding);
            var times = new List<double>(settings.Runs);
            var minTicks = (long)(settings.MinSeconds * Stopwatch.Frequency);
            long spent = 0;
            while (times.Count < settings.Runs || spent < minTicks)
            {
                var start = Stopwatch.GetTimestamp();
                session.RunWithBinding(runOptions, binding);
                var elapsed = Stopwatch.GetTimestamp() - start;
                spent += elapsed;
                times.Add(elapsed * 1000.0 / Stopwatch.Frequency);
            }
            return LatencyStats.From(batch, times) with { OutputShape = outputShape };
        });

    private static T WithBinding<T>(InferenceSession session, int batch, Func<OrtIoBinding, RunOptions, long[], T> body)
    {
        foreach (var (name, shape) in ModelInputs.Shapes(session, batch))
        {
            // Refused before anything is allocated: one array holds at most Array.MaxLength elements.
            var elements = shape.Aggregate((Int128)1, (product, d) => product * d);
            if (elements > Array.MaxLength)
                throw new NotSupportedException(
                    $"input '{name}' at batch {batch} would hold {elements:N0} values, more than the {Array.MaxLength:N0} one tensor may hold here; use a smaller --batch");
        }
        var inputs = ModelInputs.Shapes(session, batch).Select((s, i) => (s.Name, Value: ModelInputs.Random(s.Shape, 100 + i))).ToList();
        using var runOptions = new RunOptions();
        // One unbound run tells the output shapes of foreign models; then outputs are preallocated.
        var outputNames = session.OutputNames.ToArray();
        var outputs = new List<(string Name, OrtValue Value)>();
        try
        {
            using (var first = session.Run(runOptions, inputs.Select(i => i.Name).ToArray(), inputs.Select(i => i.Value).ToArray(), outputNames))
            {
                for (var i = 0; i < outputNames.Length; i++)
                {
                    var info = first[i].GetTensorTypeAndShape();
                    if (info.ElementDataType != TensorElementType.Float)
                        throw new NotSupportedException($"output '{outputNames[i]}' is {info.ElementDataType}; only float32 outputs are supported");
                    outputs.Add((outputNames[i], OrtValue.CreateTensorValueFromMemory(new float[info.ElementCount], info.Shape)));
                }
            }
            using var binding = session.CreateIoBinding();
            foreach (var (name, value) in inputs) binding.BindInput(name, value);
            foreach (var (name, value) in outputs) binding.BindOutput(name, value);
            return body(binding, runOptions, outputs[0].Value.GetTensorTypeAndShape().Shape);
        }
        finally
        {
            foreach (var (_, value) in inputs) value.Dispose();
            foreach (var (_, value) in outputs) value.Dispose();
        }
    }
}
