using CellCompiler.OnnxFormat;
using Google.Protobuf;

namespace CellCompiler.Tests;

/// <summary>Small ONNX graphs built by hand for the `inspect` tests, with the shape arithmetic exporters write.</summary>
internal static class InspectGraphs
{
    public static ValueInfoProto Value(string name, params object[] dims)
    {
        var shape = new TensorShapeProto();
        foreach (var d in dims)
            shape.Dim.Add(d is string p ? new TensorShapeProto.Types.Dimension { DimParam = p } : new TensorShapeProto.Types.Dimension { DimValue = Convert.ToInt64(d) });
        return new ValueInfoProto { Name = name, Type = new TypeProto { TensorType = new TypeProto.Types.Tensor { ElemType = 1, Shape = shape } } };
    }

    /// <summary>A float initializer of zeros.</summary>
    public static TensorProto Weight(string name, params long[] dims)
    {
        var tensor = new TensorProto { Name = name, DataType = 1 };
        tensor.Dims.AddRange(dims);
        tensor.RawData = ByteString.CopyFrom(new byte[4 * dims.Aggregate(1L, (a, b) => a * b)]);
        return tensor;
    }

    /// <summary>An int64 initializer; a scalar (dims []) holds the single value given.</summary>
    public static TensorProto Int64s(string name, long[] dims, params long[] values)
    {
        var tensor = new TensorProto { Name = name, DataType = 7 };
        tensor.Dims.AddRange(dims);
        tensor.Int64Data.AddRange(values);
        return tensor;
    }

    public static NodeProto Node(string name, string op, string[] inputs, string output, params AttributeProto[] attributes) =>
        Node(name, op, inputs, [output], attributes);

    public static NodeProto Node(string name, string op, string[] inputs, string[] outputs, params AttributeProto[] attributes)
    {
        var node = new NodeProto { Name = name, OpType = op };
        node.Input.AddRange(inputs);
        node.Output.AddRange(outputs);
        node.Attribute.AddRange(attributes);
        return node;
    }

    public static AttributeProto Ints(string name, params long[] values)
    {
        var a = new AttributeProto { Name = name, Type = AttributeProto.Types.AttributeType.Ints };
        a.Ints.AddRange(values);
        return a;
    }

    public static AttributeProto Int(string name, long value) =>
        new() { Name = name, Type = AttributeProto.Types.AttributeType.Int, I = value };

    public static AttributeProto Text(string name, string value) =>
        new() { Name = name, Type = AttributeProto.Types.AttributeType.String, S = ByteString.CopyFromUtf8(value) };

    public static ModelProto Model(GraphProto graph, long opset)
    {
        var model = new ModelProto { IrVersion = 8, ProducerName = "hand", Graph = graph };
        model.OpsetImport.Add(new OperatorSetIdProto { Domain = "", Version = opset });
        return model;
    }

    /// <summary>
    /// A channel shuffle as torch.onnx.export writes it (opset 13 forms: pads, axes, split sizes as inputs), by hand:
    /// images [N, 8, 6, 6] -> Conv 1x1 (8 -> 8) -> [N, 8, 6, 6] -> Pad 1 on H and W -> [N, 8, 8, 8]
    /// -> Reshape to [Shape[0], 2, Shape[1] / 2, 8, 8] (Shape, Gather, Div, Cast, Unsqueeze, Concat) -> [N, 2, 4, 8, 8]
    /// -> Transpose (0, 2, 1, 3, 4) -> [N, 4, 2, 8, 8] -> Reshape to [Shape[0], -1, 8, 8] -> [N, 8, 8, 8]
    /// -> Slice channels [0, (C + 1) / 2 * 1) (Add, Div, Mul on Shape) -> [N, 4, 8, 8], Split [4, 4] -> second half [N, 4, 8, 8]
    /// -> Concat -> [N, 8, 8, 8] -> Conv 3x3 stride 2 pads 1 (8 -> 16) -> [N, 16, 4, 4]
    /// -> GlobalAveragePool -> Flatten -> [N, 16] -> Gemm (transB, 16 -> 10) -> logits [N, 10].
    /// MACs by section 4: 8*6*6 * 8 + 16*4*4 * 8*3*3 + 16*10 = 2,304 + 18,432 + 160 = 20,896.
    /// </summary>
    public static ModelProto ChannelShuffle()
    {
        var g = new GraphProto { Name = "shuffle" };
        g.Input.Add(Value("images", "N", 8, 6, 6));
        g.Output.Add(new ValueInfoProto { Name = "logits" });
        g.Initializer.Add(Weight("conv1.w", 8, 8, 1, 1));
        g.Initializer.Add(Weight("conv2.w", 16, 8, 3, 3));
        g.Initializer.Add(Weight("fc.w", 10, 16));
        g.Initializer.Add(Weight("fc.b", 10));
        g.Initializer.Add(Int64s("pads", [8], 0, 0, 1, 1, 0, 0, 1, 1));
        g.Initializer.Add(Int64s("i0", [], 0));
        g.Initializer.Add(Int64s("i1", [], 1));
        g.Initializer.Add(Int64s("two", [], 2));
        g.Initializer.Add(Int64s("one1", [1], 1));
        g.Initializer.Add(Int64s("two1", [1], 2));
        g.Initializer.Add(Int64s("zero1", [1], 0));
        g.Initializer.Add(Int64s("axis0", [1], 0));
        g.Initializer.Add(Int64s("c2", [1], 2));
        g.Initializer.Add(Int64s("hw", [2], 8, 8));
        g.Initializer.Add(Int64s("rest", [3], -1, 8, 8));
        g.Initializer.Add(Int64s("halves", [2], 4, 4));
        g.Node.Add(Node("conv1", "Conv", ["images", "conv1.w"], "c"));
        g.Node.Add(Node("pad", "Pad", ["c", "pads"], "p", Text("mode", "constant")));
        g.Node.Add(Node("shape", "Shape", ["p"], "s"));
        g.Node.Add(Node("batch", "Gather", ["s", "i0"], "n", Int("axis", 0)));
        g.Node.Add(Node("channels", "Gather", ["s", "i1"], "ch", Int("axis", 0)));
        g.Node.Add(Node("half", "Div", ["ch", "two"], "half"));
        g.Node.Add(Node("cast", "Cast", ["half"], "halfc", Int("to", 7)));
        g.Node.Add(Node("n1", "Unsqueeze", ["n", "axis0"], "n1"));
        g.Node.Add(Node("h1", "Unsqueeze", ["halfc", "axis0"], "h1"));
        g.Node.Add(Node("target", "Concat", ["n1", "c2", "h1", "hw"], "target", Int("axis", 0)));
        g.Node.Add(Node("split_groups", "Reshape", ["p", "target"], "r"));
        g.Node.Add(Node("shuffle", "Transpose", ["r"], "t", Ints("perm", 0, 2, 1, 3, 4)));
        g.Node.Add(Node("target2", "Concat", ["n1", "rest"], "target2", Int("axis", 0)));
        g.Node.Add(Node("merge_groups", "Reshape", ["t", "target2"], "u"));
        g.Node.Add(Node("shape_u", "Shape", ["u"], "su"));
        g.Node.Add(Node("ch_u", "Gather", ["su", "one1"], "chu", Int("axis", 0)));
        g.Node.Add(Node("plus1", "Add", ["chu", "one1"], "chu1"));
        g.Node.Add(Node("halfu", "Div", ["chu1", "two1"], "halfu"));
        g.Node.Add(Node("end", "Mul", ["halfu", "one1"], "end"));
        g.Node.Add(Node("first_half", "Slice", ["u", "zero1", "end", "one1"], "a"));
        g.Node.Add(Node("split", "Split", ["u", "halves"], ["b0", "b1"], Int("axis", 1)));
        g.Node.Add(Node("cat", "Concat", ["a", "b1"], "m", Int("axis", 1)));
        g.Node.Add(Node("conv2", "Conv", ["m", "conv2.w"], "c2out", Ints("strides", 2, 2), Ints("pads", 1, 1, 1, 1), Ints("kernel_shape", 3, 3)));
        g.Node.Add(Node("gap", "GlobalAveragePool", ["c2out"], "gp"));
        g.Node.Add(Node("flat", "Flatten", ["gp"], "f", Int("axis", 1)));
        g.Node.Add(Node("fc", "Gemm", ["f", "fc.w", "fc.b"], "logits", Int("transB", 1)));
        return Model(g, 13);
    }

    public const long ChannelShuffleMacs = 8 * 6 * 6 * 8 + 16 * 4 * 4 * 8 * 3 * 3 + 16 * 10;
}
