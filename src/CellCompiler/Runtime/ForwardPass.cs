using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Runtime;

/// <summary>The result of one forward pass: the output values and their shape.</summary>
public sealed record ForwardResult(float[] Values, long[] Shape)
{
    public bool AllFinite => Values.All(float.IsFinite);
}

/// <summary>
/// Runs a model on ONNX Runtime's CPU provider. One instance holds one session; inputs are
/// float32 tensors with the batch size chosen by the caller.
/// </summary>
public sealed class ForwardPass : IDisposable
{
    /// <summary>
    /// No graph optimizations: the runtime executes the graph exactly as written. Creating a
    /// session this way costs about half of a fully optimized one (the optimizers rewrite and
    /// re-resolve the whole graph, and the NCHWc layout pass alone is a large share), which is
    /// most of a smoke test's time; the runs themselves are slower, but there are only two.
    /// Latency is measured with full optimizations instead (<see cref="LatencyMeter"/>).
    /// </summary>
    public const GraphOptimizationLevel AsWritten = GraphOptimizationLevel.ORT_DISABLE_ALL;

    private readonly InferenceSession _session;

    public ForwardPass(byte[] model, GraphOptimizationLevel optimization = AsWritten, int intraOpThreads = 1)
    {
        NativeHeap.KeepFreedMemory();
        using var options = new SessionOptions
        {
            IntraOpNumThreads = intraOpThreads,
            InterOpNumThreads = 1,
            GraphOptimizationLevel = optimization,
            LogSeverityLevel = RuntimeLog.Level,
        };
        _session = new InferenceSession(model, options);
    }

    public string InputName => _session.InputNames[0];
    public string OutputName => _session.OutputNames[0];

    /// <summary>Seeded standard-normal input of the given shape, so runs are repeatable.</summary>
    public static float[] RandomInput(long[] shape, long seed)
    {
        long count = 1;
        foreach (var d in shape) count *= d;
        var values = new float[count];
        var random = new Onnx.SeededRandom((ulong)seed ^ 0x5EED1A9A7UL);
        random.FillNormal(values, 1.0);
        return values;
    }

    public ForwardResult Run(float[] input, long[] shape)
    {
        using var runOptions = new RunOptions();
        return Run(input, shape, runOptions);
    }

    /// <summary>A run under the caller's options: setting their <see cref="RunOptions.Terminate"/> from another thread stops it.</summary>
    public ForwardResult Run(float[] input, long[] shape, RunOptions runOptions)
    {
        using var tensor = OrtValue.CreateTensorValueFromMemory(input, shape);
        using var outputs = _session.Run(runOptions, [InputName], [tensor], [OutputName]);
        var output = outputs[0];
        return new ForwardResult(output.GetTensorDataAsSpan<float>().ToArray(), output.GetTensorTypeAndShape().Shape);
    }

    public void Dispose() => _session.Dispose();
}
