using CellCompiler.Graph;
using CellCompiler.OnnxFormat;
using CellCompiler.Shapes;
using Google.Protobuf;

namespace CellCompiler.Onnx;

/// <summary>Settings of one emission: seeded weights, opset and the metadata to record.</summary>
public sealed record EmitOptions(long Seed, int Opset, string GraphName, IReadOnlyList<KeyValuePair<string, string>> Metadata);

/// <summary>
/// Writes a shaped network as an ONNX model: one node per op, value_info for every intermediate
/// tensor, seeded weights. The output is a pure function of its inputs, byte for byte.
/// </summary>
public static class OnnxEmitter
{
    internal const int Float = (int)TensorProto.Types.DataType.Float;
    private const string Batch = "N";

    /// <summary>The serialized model, written in one pass with the weights drawn straight into the output buffer.</summary>
    public static byte[] Emit(ShapedNetwork net, EmitOptions options)
    {
        var (model, initializers) = Structure(net, options);
        return ModelWriter.Write(model, initializers, options.Seed);
    }

    /// <summary>The whole model as a protobuf object, weights included (slower: the weights are copied).</summary>
    public static ModelProto Build(ShapedNetwork net, EmitOptions options)
    {
        var (model, initializers) = Structure(net, options);
        foreach (var initializer in initializers)
        {
            var tensor = ModelWriter.TensorHeader(initializer);
            tensor.RawData = UnsafeByteOperations.UnsafeWrap(initializer.Materialize(options.Seed));
            model.Graph.Initializer.Add(tensor);
        }
        return model;
    }

    /// <summary>Everything but the weight values: nodes, value_info, inputs, outputs, metadata, and the list of initializers to draw.</summary>
    private static (ModelProto Model, List<Initializer> Initializers) Structure(ShapedNetwork net, EmitOptions options)
    {
        var graph = new GraphProto { Name = options.GraphName };
        graph.Input.Add(ValueInfo(net.Network.InputName, net.InputShape));
        graph.Output.Add(ValueInfo(net.Network.OutputName, net.OutputShape));

        var initializers = new List<Initializer>();
        foreach (var op in net.Network.Ops)
        {
            graph.Node.Add(Node(op, net, initializers));
            if (op.Output != net.Network.OutputName)
                graph.ValueInfo.Add(ValueInfo(op.Output, net[op.Output]));
        }

        var model = new ModelProto
        {
            IrVersion = OnnxVersions.IrVersionFor(options.Opset),
            ProducerName = OnnxVersions.ProducerName,
            ProducerVersion = OnnxVersions.ProducerVersion,
            Graph = graph,
        };
        model.OpsetImport.Add(new OperatorSetIdProto { Domain = "", Version = options.Opset });
        foreach (var (key, value) in options.Metadata)
            model.MetadataProps.Add(new StringStringEntryProto { Key = key, Value = value });
        return (model, initializers);
    }

    private static NodeProto Node(NetOp op, ShapedNetwork net, List<Initializer> initializers)
    {
        var node = new NodeProto { Name = op.Name, OpType = op.OnnxType };
        node.Input.AddRange(op.Inputs);
        node.Output.Add(op.Output);
        var inputs = net.InputsOf(op);
        foreach (var weight in op.Weights(inputs, net[op.Output]))
        {
            var name = $"{op.Name}.{weight.Suffix}";
            initializers.Add(new Initializer(name, weight));
            node.Input.Add(name);
        }
        foreach (var attribute in op.Attributes(inputs))
            node.Attribute.Add(Attribute(attribute));
        return node;
    }

    private static AttributeProto Attribute(NodeAttribute attribute) => attribute switch
    {
        IntAttribute a => Int(a.Name, a.Value),
        IntsAttribute a => Ints(a.Name, a.Values),
        FloatAttribute a => new AttributeProto { Name = a.Name, Type = AttributeProto.Types.AttributeType.Float, F = a.Value },
        _ => throw new InvalidOperationException($"no ONNX form for attribute {attribute.GetType().Name}"),
    };

    private static AttributeProto Int(string name, long value) =>
        new() { Name = name, Type = AttributeProto.Types.AttributeType.Int, I = value };

    private static AttributeProto Ints(string name, params long[] values)
    {
        var attribute = new AttributeProto { Name = name, Type = AttributeProto.Types.AttributeType.Ints };
        attribute.Ints.AddRange(values);
        return attribute;
    }

    private static ValueInfoProto ValueInfo(string name, TensorShape shape)
    {
        var tensorShape = new TensorShapeProto();
        tensorShape.Dim.Add(new TensorShapeProto.Types.Dimension { DimParam = Batch });
        foreach (var d in shape.Dims)
            tensorShape.Dim.Add(new TensorShapeProto.Types.Dimension { DimValue = d });
        return new ValueInfoProto
        {
            Name = name,
            Type = new TypeProto { TensorType = new TypeProto.Types.Tensor { ElemType = Float, Shape = tensorShape } },
        };
    }
}
