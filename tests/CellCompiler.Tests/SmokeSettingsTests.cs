using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.OnnxFormat;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;
using Google.Protobuf;
using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Tests;

/// <summary>
/// The smoke test runs its session without graph optimizations, because that session is the
/// cheapest to create (issue 10). These tests show that nothing is lost by it: every failure class
/// the smoke test knows is found, with the same reason, at every ONNX Runtime optimization level;
/// and on generated candidates the unoptimized session gives the optimized session's verdict and
/// logits. (The hand-made models reuse this class's builder, see SmokeTestTests.cs.)
/// </summary>
public sealed partial class SmokeTestTests
{
    private static readonly GraphOptimizationLevel[] EveryLevel =
    [
        GraphOptimizationLevel.ORT_DISABLE_ALL, GraphOptimizationLevel.ORT_ENABLE_BASIC,
        GraphOptimizationLevel.ORT_ENABLE_EXTENDED, GraphOptimizationLevel.ORT_ENABLE_ALL,
    ];

    /// <summary>Every failure class of SmokeTest, each made by one hand-built model, with the kind it must get.</summary>
    public static TheoryData<string, string> FailureClasses => new()
    {
        { "constant logits", "input-independent output" },
        { "sqrt of -1", "non-finite logits" },
        { "0 / 0", "non-finite logits" },
        { "3 classes expected", "wrong output shape" },
        { "transposed output", "wrong output shape" },
        { "reshape fixed to batch 1", "runtime failure" },
        { "dangling input", "runtime cannot load" },
        { "garbage bytes", "runtime cannot load" },
        { "no bytes", "runtime cannot load" },
    };

    private static (byte[] Model, int[] Logits) FailureCase(string name) => name switch
    {
        // The same models as the single-class tests above (ONNX operator semantics cited there).
        "constant logits" => (Model(
            [Node("Mul", ["pooled", "zero"], "zeroed"), Node("Add", ["zeroed", "bias"], "logits")],
            [Constant("zero", [2], 0f, 0f), Constant("bias", [2], 0.5f, -0.25f)]), Logits),
        "sqrt of -1" => (Model([Node("Sqrt", ["c"], "root"), Node("Add", ["pooled", "root"], "logits")], [Constant("c", [2], -1f, 4f)]), Logits),
        "0 / 0" => (Model(
            [Node("Mul", ["pooled", "zero"], "zeroed"), Node("Div", ["zeroed", "zero"], "logits")], [Constant("zero", [2], 0f, 0f)]), Logits),
        "3 classes expected" => (Working(), [3]),
        "transposed output" => (Model([Node("Transpose", ["pooled"], "logits")], [], [2, "N"]), Logits),
        // ONNX Reshape spec: the target shape must hold as many elements as the input. [1, 2] fits
        // pooled [N, 2] at batch 1 only, so the model loads, passes batch 1 and fails at batch 2.
        "reshape fixed to batch 1" => (Model(
            [Node("Reshape", ["pooled", "shape"], "logits")], [Int64Constant("shape", 1, 2)]), Logits),
        // ONNX IR spec: every node input must be a graph input, an initializer or another node's output.
        "dangling input" => (Model([Node("Add", ["pooled", "missing"], "logits")], []), Logits),
        "garbage bytes" => (GarbageBytes(), Logits),
        "no bytes" => ([], Logits),
        _ => throw new ArgumentOutOfRangeException(nameof(name), name, "no such failure case"),
    };

    [Theory]
    [MemberData(nameof(FailureClasses))]
    public void Every_failure_class_is_found_the_same_way_at_every_optimization_level(string name, string kind)
    {
        var (model, logits) = FailureCase(name);
        var asWritten = SmokeTest.Run(model, SampleShape, logits);
        Assert.Equal(kind, asWritten.Kind);
        foreach (var level in EveryLevel)
        {
            var verdict = SmokeTest.Run(model, SampleShape, logits, 0, level);
            Assert.Equal(kind, verdict.Kind);
            if (kind != "runtime cannot load") // the runtime's own load messages may name the stage that refused the model
                Assert.Equal(asWritten.Problem, verdict.Problem);
        }
    }

    [Fact]
    public void The_control_model_works_at_every_optimization_level()
    {
        // Without this, a level that fails every model would pass the theory above for the failing cases.
        foreach (var level in EveryLevel)
            Assert.True(SmokeTest.Run(Working(), SampleShape, Logits, 0, level).Works, level.ToString());
    }

    [Fact]
    public void On_generated_candidates_the_unoptimized_session_agrees_with_the_optimized_one()
    {
        var compared = 0;
        for (var seed = 0; compared < 24 && seed < 200; seed++)
        {
            var genotype = RandomGenotypes.Parse(4100 + seed);
            var skeleton = SkeletonReader.Resolve("proxy");
            if (seed % 3 == 2) skeleton = skeleton with { Merge = MergeMode.Sum };
            CompiledModel model;
            try { model = Compiler.Compile(genotype, skeleton); }
            catch (DeadCellException) { continue; }

            var cheap = SmokeTest.Run(model.OnnxBytes, model.InputShape.Dims, model.OutputShape.Dims, seed, ForwardPass.AsWritten);
            var full = SmokeTest.Run(model.OnnxBytes, model.InputShape.Dims, model.OutputShape.Dims, seed, GraphOptimizationLevel.ORT_ENABLE_ALL);
            Assert.Equal(full, cheap);

            // The logits themselves: optimizations only fuse and re-lay out the same arithmetic, so they agree to
            // float rounding (1e-4 of the largest logit, the tolerance the reference tests use against PyTorch).
            long[] shape = [2, .. model.InputShape.Dims.Select(d => (long)d)];
            var input = ForwardPass.RandomInput(shape, seed);
            using var asWritten = new ForwardPass(model.OnnxBytes, ForwardPass.AsWritten);
            using var optimized = new ForwardPass(model.OnnxBytes, GraphOptimizationLevel.ORT_ENABLE_ALL);
            var a = asWritten.Run(input, shape);
            var b = optimized.Run(input, shape);
            Assert.Equal(b.Shape, a.Shape);
            var scale = Math.Max(1e-6, b.Values.Max(v => Math.Abs(v)));
            for (var i = 0; i < a.Values.Length; i++)
                Assert.True(Math.Abs(a.Values[i] - b.Values[i]) <= 1e-4 * scale,
                    $"{genotype.Name} ({Skeleton.MergeName(skeleton.Merge)}): logit {i} is {a.Values[i]} as written, {b.Values[i]} optimized");
            compared++;
        }
        Assert.Equal(24, compared);
    }

    private static TensorProto Int64Constant(string name, params long[] values)
    {
        var tensor = new TensorProto { Name = name, DataType = (int)TensorProto.Types.DataType.Int64 };
        tensor.Dims.Add(values.Length);
        tensor.Int64Data.AddRange(values);
        return tensor;
    }

    private static byte[] GarbageBytes()
    {
        var garbage = new byte[256];
        new Random(7).NextBytes(garbage);
        return garbage;
    }
}
