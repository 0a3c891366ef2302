using System.Diagnostics;
using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Runtime;

/// <summary>
/// Runs a model on ONNX Runtime's CPU provider and checks that it works: the session loads, the
/// output has the expected shape at batch 1 and at batch 2, every logit is finite, and the logits
/// depend on the input (two different samples give different logits).
/// The session runs the graph as written, without graph optimizations (<see cref="ForwardPass.AsWritten"/>):
/// that is the cheapest session to create, and the tests show it finds every failure that a fully
/// optimized session finds (tests/CellCompiler.Tests/SmokeSettingsTests.cs).
/// </summary>
public static class SmokeTest
{
    /// <param name="inputShape">Shape of one sample (without the batch dimension).</param>
    /// <param name="outputShape">Expected shape of one sample's output (without the batch dimension).</param>
    /// <param name="timeLimit">
    /// Time the whole test may take, session included (null: no limit). The forward passes are stopped
    /// when it runs out; creating the session cannot be stopped, so it is checked once the session is
    /// made (its cost grows with the node count, which the caller bounds).
    /// </param>
    public static SmokeVerdict Run(byte[] model, IReadOnlyList<int> inputShape, IReadOnlyList<int> outputShape, long seed = 0,
        TimeSpan? timeLimit = null) =>
        Run(model, inputShape, outputShape, seed, ForwardPass.AsWritten, timeLimit);

    /// <summary>The same test on a session with the given graph optimizations (to compare settings).</summary>
    public static SmokeVerdict Run(byte[] model, IReadOnlyList<int> inputShape, IReadOnlyList<int> outputShape, long seed,
        GraphOptimizationLevel optimization, TimeSpan? timeLimit = null)
    {
        var clock = Stopwatch.StartNew();
        ForwardPass pass;
        try { pass = new ForwardPass(model, optimization); }
        catch (Exception e)
        {
            return new SmokeVerdict($"ONNX Runtime could not load the model: {OneLine(e.Message)}", "runtime cannot load");
        }
        using (pass)
        using (var runOptions = new RunOptions())
        using (var stopper = new CancellationTokenSource())
        {
            var registration = default(CancellationTokenRegistration);
            if (timeLimit is { } limit)
            {
                var left = limit - clock.Elapsed;
                if (left <= TimeSpan.Zero) return OutOfTime(limit);
                // The runtime looks at the flag between nodes, so a run stops soon after it is set.
                registration = stopper.Token.Register(() => runOptions.Terminate = true);
                stopper.CancelAfter(left);
            }
            try
            {
                var one = pass.Run(ForwardPass.RandomInput(Batch(1, inputShape), seed), Batch(1, inputShape), runOptions);
                if (Problem(one, 1, outputShape) is { } p1) return p1;
                var two = pass.Run(ForwardPass.RandomInput(Batch(2, inputShape), seed + 1), Batch(2, inputShape), runOptions);
                if (Problem(two, 2, outputShape) is { } p2) return p2;
                var perSample = two.Values.Length / 2;
                if (two.Values.AsSpan(0, perSample).SequenceEqual(two.Values.AsSpan(perSample, perSample)))
                    return new SmokeVerdict("the output does not depend on the input: two different input samples gave identical logits", "input-independent output");
                return SmokeVerdict.Ok;
            }
            catch (Exception) when (stopper.IsCancellationRequested)
            {
                return OutOfTime(timeLimit!.Value);
            }
            catch (Exception e)
            {
                // Any failure here (the runtime's, or an allocation refused) is this model's problem, not the run's.
                return new SmokeVerdict($"ONNX Runtime failed while running the model: {OneLine(e.Message)}", "runtime failure");
            }
            finally
            {
                // Disarmed (waiting for a callback under way) before the options are released.
                registration.Dispose();
            }
        }
    }

    private static SmokeVerdict OutOfTime(TimeSpan limit) =>
        new($"not run to the end on ONNX Runtime: it took longer than {Wording.Significant(limit.TotalSeconds)} s", "out of time") { OutOfTime = true };

    private static long[] Batch(int batch, IReadOnlyList<int> shape) => [batch, .. shape.Select(d => (long)d)];

    private static SmokeVerdict? Problem(ForwardResult result, int batch, IReadOnlyList<int> expected)
    {
        var want = Batch(batch, expected);
        if (!result.Shape.SequenceEqual(want))
            return new SmokeVerdict($"at batch {batch} the output shape is [{string.Join(", ", result.Shape)}], expected [{string.Join(", ", want)}]", "wrong output shape");
        var bad = result.Values.Count(v => !float.IsFinite(v));
        if (bad > 0)
            return new SmokeVerdict($"at batch {batch}, {bad} of {result.Values.Length} logits are not finite (NaN or infinity)", "non-finite logits");
        return null;
    }

    private static string OneLine(string text) => text.ReplaceLineEndings(" ").Trim();
}
