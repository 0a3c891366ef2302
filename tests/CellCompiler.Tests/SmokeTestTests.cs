using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.OnnxFormat;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;
using Google.Protobuf;

namespace CellCompiler.Tests;

/// <summary>
/// The CPU smoke test (issue 3) on small ONNX models built here by hand, op by op from the ONNX
/// operator specification (opset 17, IR 8), so that each one fails in exactly one known way.
/// Every model takes `images` [N, 3, 4, 4] and is expected to give `logits` [N, 2].
/// </summary>
public sealed partial class SmokeTestTests
{
    private static readonly int[] SampleShape = [3, 4, 4];
    private static readonly int[] Logits = [2];
    private const int Float = (int)TensorProto.Types.DataType.Float;

    // ---- a tiny ONNX model builder over the generated protobuf classes (proto/onnx.proto) ----

    private static ValueInfoProto Value(string name, params object[] dims)
    {
        var shape = new TensorShapeProto();
        foreach (var d in dims)
            shape.Dim.Add(d is string symbol
                ? new TensorShapeProto.Types.Dimension { DimParam = symbol }
                : new TensorShapeProto.Types.Dimension { DimValue = Convert.ToInt64(d) });
        return new ValueInfoProto
        {
            Name = name,
            Type = new TypeProto { TensorType = new TypeProto.Types.Tensor { ElemType = Float, Shape = shape } },
        };
    }

    private static TensorProto Constant(string name, long[] dims, params float[] values)
    {
        var tensor = new TensorProto { Name = name, DataType = Float };
        tensor.Dims.AddRange(dims);
        tensor.FloatData.AddRange(values);
        return tensor;
    }

    private static NodeProto Node(string opType, string[] inputs, string output, params AttributeProto[] attributes)
    {
        var node = new NodeProto { Name = output + "/" + opType, OpType = opType };
        node.Input.AddRange(inputs);
        node.Output.Add(output);
        node.Attribute.AddRange(attributes);
        return node;
    }

    private static AttributeProto IntAttribute(string name, long value) =>
        new() { Name = name, Type = AttributeProto.Types.AttributeType.Int, I = value };

    /// <summary>
    /// images [N,3,4,4] -> GlobalAveragePool [N,3,1,1] -> Flatten [N,3] -> MatMul W [3,2] -> `pooled` [N,2],
    /// then <paramref name="tail"/> nodes turning `pooled` into `logits` of <paramref name="logitsDims"/>.
    /// </summary>
    private static byte[] Model(IEnumerable<NodeProto> tail, IEnumerable<TensorProto> constants, object[]? logitsDims = null)
    {
        var graph = new GraphProto { Name = "hand-made" };
        graph.Input.Add(Value("images", "N", 3, 4, 4));
        graph.Output.Add(Value("logits", logitsDims ?? ["N", 2]));
        graph.Node.Add(Node("GlobalAveragePool", ["images"], "gap"));
        graph.Node.Add(Node("Flatten", ["gap"], "flat", IntAttribute("axis", 1)));
        graph.Node.Add(Node("MatMul", ["flat", "w"], "pooled"));
        graph.ValueInfo.Add(Value("gap", "N", 3, 1, 1));
        graph.ValueInfo.Add(Value("flat", "N", 3));
        graph.ValueInfo.Add(Value("pooled", "N", 2));
        graph.Initializer.Add(Constant("w", [3, 2], 1.0f, -0.5f, 0.25f, 2.0f, -1.5f, 0.75f));
        graph.Node.AddRange(tail);
        graph.Initializer.AddRange(constants);
        var model = new ModelProto { IrVersion = 8, ProducerName = "SmokeTestTests", Graph = graph };
        model.OpsetImport.Add(new OperatorSetIdProto { Domain = "", Version = 17 });
        return model.ToByteArray();
    }

    /// <summary>logits = pooled + bias: depends on the input, finite. The control case.</summary>
    private static byte[] Working() =>
        Model([Node("Add", ["pooled", "bias"], "logits")], [Constant("bias", [2], 0.5f, -0.25f)]);

    [Fact]
    public void A_working_hand_made_model_passes()
    {
        // Control: the same builder gives a model that works, so the failures below come from the one change each makes.
        var verdict = SmokeTest.Run(Working(), SampleShape, Logits);
        Assert.True(verdict.Works, verdict.Problem);
    }

    [Fact]
    public void Logits_from_a_constant_are_caught_as_input_independent()
    {
        // ONNX Mul/Add semantics: pooled * 0 + bias is the constant bias for every sample, whatever the input.
        var model = Model(
            [Node("Mul", ["pooled", "zero"], "zeroed"), Node("Add", ["zeroed", "bias"], "logits")],
            [Constant("zero", [2], 0f, 0f), Constant("bias", [2], 0.5f, -0.25f)]);
        var verdict = SmokeTest.Run(model, SampleShape, Logits);
        Assert.False(verdict.Works);
        // Issue 3: "the output depends on the input (two different inputs give different logits)".
        Assert.Contains("does not depend on the input", verdict.Problem);
    }

    [Fact]
    public void NaN_logits_are_caught_as_non_finite()
    {
        // IEEE 754 and the ONNX Sqrt spec: sqrt(-1) is NaN, and NaN + x is NaN. One of the two logits per sample is NaN.
        var model = Model(
            [Node("Sqrt", ["c"], "root"), Node("Add", ["pooled", "root"], "logits")],
            [Constant("c", [2], -1f, 4f)]);
        var verdict = SmokeTest.Run(model, SampleShape, Logits);
        Assert.False(verdict.Works);
        // Issue 3: "all logits are finite". At batch 1 there are 2 logits, one of them NaN.
        Assert.Contains("not finite", verdict.Problem);
        Assert.Contains("1 of 2", verdict.Problem);
    }

    [Fact]
    public void Zero_divided_by_zero_is_caught_as_non_finite()
    {
        // IEEE 754: 0/0 is NaN (the ONNX Div spec follows IEEE float semantics).
        var model = Model(
            [Node("Mul", ["pooled", "zero"], "zeroed"), Node("Div", ["zeroed", "zero"], "logits")],
            [Constant("zero", [2], 0f, 0f)]);
        var verdict = SmokeTest.Run(model, SampleShape, Logits);
        Assert.False(verdict.Works);
        Assert.Contains("not finite", verdict.Problem);
        Assert.Contains("2 of 2", verdict.Problem);
    }

    [Fact]
    public void A_wrong_output_shape_is_reported_with_both_shapes()
    {
        // The working model gives [N, 2] (MatMul of [N,3] by [3,2], ONNX MatMul spec); expecting 3 classes must fail.
        var verdict = SmokeTest.Run(Working(), SampleShape, [3]);
        Assert.False(verdict.Works);
        Assert.Contains("[1, 2]", verdict.Problem);
        Assert.Contains("[1, 3]", verdict.Problem);
    }

    [Fact]
    public void A_model_whose_declared_output_is_wrong_still_reports_the_real_shape()
    {
        // Transpose of [N,2] (ONNX Transpose spec, default perm reverses the axes) gives [2, N]; at batch 1: [2, 1].
        var model = Model([Node("Transpose", ["pooled"], "logits")], [], [2, "N"]);
        var verdict = SmokeTest.Run(model, SampleShape, Logits);
        Assert.False(verdict.Works);
        Assert.Contains("[2, 1]", verdict.Problem);
        Assert.Contains("[1, 2]", verdict.Problem);
    }

    [Fact]
    public void Garbage_bytes_are_reported_as_not_loadable()
    {
        var garbage = new byte[256];
        new Random(7).NextBytes(garbage);
        var verdict = SmokeTest.Run(garbage, SampleShape, Logits);
        Assert.False(verdict.Works);
        Assert.Contains("could not load", verdict.Problem);
    }

    [Fact]
    public void Empty_bytes_are_reported_as_not_loadable()
    {
        var verdict = SmokeTest.Run([], SampleShape, Logits);
        Assert.False(verdict.Works);
        Assert.Contains("could not load", verdict.Problem);
    }

    [Fact]
    public void A_model_compiled_from_a_fixture_passes()
    {
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-h3.json"));
        var model = Compiler.Compile(genotype, SkeletonReader.Resolve("proxy"));
        // Contract section 2: the proxy preset is 3x32x32 input and 10 classes.
        Assert.Equal([3, 32, 32], model.InputShape.Dims);
        Assert.Equal([10], model.OutputShape.Dims);
        var verdict = SmokeTest.Run(model.OnnxBytes, model.InputShape.Dims, model.OutputShape.Dims);
        Assert.True(verdict.Works, verdict.Problem);
        Assert.Null(verdict.Problem);
    }
}
