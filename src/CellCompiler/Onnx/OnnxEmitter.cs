using CellCompiler.Lowering;
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
        switch (op)
        {
            case ConvOp conv:
            {
                var inPerGroup = net.ConvInChannelsPerGroup(conv);
                var fanIn = (double)inPerGroup * conv.Kernel * conv.Kernel;
                initializers.Add(new Initializer($"{op.Name}.weight",
                    [net.ConvOutChannels(conv), inPerGroup, conv.Kernel, conv.Kernel], Fill.HeNormal, Math.Sqrt(2.0 / fanIn)));
                node.Input.Add($"{op.Name}.weight");
                node.Attribute.Add(Ints("kernel_shape", conv.Kernel, conv.Kernel));
                node.Attribute.Add(Ints("strides", conv.Stride, conv.Stride));
                node.Attribute.Add(Ints("pads", conv.Pad, conv.Pad, conv.Pad, conv.Pad));
                node.Attribute.Add(Int("group", net.ConvGroups(conv)));
                break;
            }
            case BatchNormOp:
            {
                long channels = net[op.Output].Channels;
                foreach (var (suffix, fill) in new[] { ("scale", Fill.Ones), ("bias", Fill.Zeros), ("mean", Fill.Zeros), ("var", Fill.Ones) })
                {
                    initializers.Add(new Initializer($"{op.Name}.{suffix}", [channels], fill, 0));
                    node.Input.Add($"{op.Name}.{suffix}");
                }
                node.Attribute.Add(new AttributeProto { Name = "epsilon", Type = AttributeProto.Types.AttributeType.Float, F = BatchNormOp.Epsilon });
                node.Attribute.Add(new AttributeProto { Name = "momentum", Type = AttributeProto.Types.AttributeType.Float, F = BatchNormOp.Momentum });
                break;
            }
            case MaxPoolOp pool:
                AddPoolAttributes(node, pool.Kernel, pool.Stride, pool.Pad);
                break;
            case AveragePoolOp pool:
                AddPoolAttributes(node, pool.Kernel, pool.Stride, pool.Pad);
                node.Attribute.Add(Int("count_include_pad", 0));
                break;
            case ConcatOp or FlattenOp:
                node.Attribute.Add(Int("axis", 1));
                break;
            case GemmOp gemm:
            {
                long inFeatures = net[gemm.Inputs[0]].Channels;
                initializers.Add(new Initializer($"{op.Name}.weight", [gemm.OutFeatures, inFeatures], Fill.Uniform, 1.0 / Math.Sqrt(inFeatures)));
                initializers.Add(new Initializer($"{op.Name}.bias", [gemm.OutFeatures], Fill.Zeros, 0));
                node.Input.Add($"{op.Name}.weight");
                node.Input.Add($"{op.Name}.bias");
                node.Attribute.Add(Int("transB", 1));
                break;
            }
        }
        return node;
    }

    private static void AddPoolAttributes(NodeProto node, int kernel, int stride, int pad)
    {
        node.Attribute.Add(Ints("kernel_shape", kernel, kernel));
        node.Attribute.Add(Ints("strides", stride, stride));
        node.Attribute.Add(Ints("pads", pad, pad, pad, pad));
    }

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
