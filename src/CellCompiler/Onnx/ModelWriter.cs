using CellCompiler.OnnxFormat;
using Google.Protobuf;

namespace CellCompiler.Onnx;

/// <summary>
/// Serializes a model whose weights are not yet drawn, laying out the exact bytes the protobuf
/// runtime would write (fields in number order) but drawing each weight tensor directly into its
/// place in the output. This avoids holding every weight twice, which dominated the time and
/// memory of full-size compiles.
/// </summary>
internal static class ModelWriter
{
    private const int LengthDelimited = 2;
    private static readonly byte GraphTag = Tag(7);        // ModelProto.graph
    private static readonly byte InitializerTag = Tag(5);  // GraphProto.initializer
    private static readonly byte RawDataTag = Tag(9);      // TensorProto.raw_data

    private static byte Tag(int field) => (byte)((field << 3) | LengthDelimited);

    public static TensorProto TensorHeader(Initializer initializer)
    {
        var tensor = new TensorProto { Name = initializer.Name, DataType = OnnxEmitter.Float };
        tensor.Dims.AddRange(initializer.Dims);
        return tensor;
    }

    public static byte[] Write(ModelProto model, IReadOnlyList<Initializer> initializers, long seed)
    {
        if (model.Graph.Initializer.Count != 0)
            throw new ArgumentException("the model must come without initializers", nameof(model));

        // Split the messages at the position where the initializers go, keeping field-number order.
        var modelHead = new ModelProto { IrVersion = model.IrVersion, ProducerName = model.ProducerName, ProducerVersion = model.ProducerVersion, Domain = model.Domain, ModelVersion = model.ModelVersion, DocString = model.DocString };
        var modelTail = new ModelProto();
        modelTail.OpsetImport.AddRange(model.OpsetImport);
        modelTail.MetadataProps.AddRange(model.MetadataProps);
        var graph = model.Graph;
        var graphHead = new GraphProto { Name = graph.Name };
        graphHead.Node.AddRange(graph.Node);
        var graphTail = new GraphProto { DocString = graph.DocString };
        graphTail.Input.AddRange(graph.Input);
        graphTail.Output.AddRange(graph.Output);
        graphTail.ValueInfo.AddRange(graph.ValueInfo);

        var headers = initializers.Select(TensorHeader).ToArray();
        // Each size is computed once (protobuf does not cache them) and used again for the writing.
        var headerSizes = new int[headers.Length];
        var tensorSizes = new long[headers.Length];
        var (modelHeadSize, graphHeadSize, graphTailSize, modelTailSize) =
            (modelHead.CalculateSize(), graphHead.CalculateSize(), graphTail.CalculateSize(), modelTail.CalculateSize());
        long graphSize = graphHeadSize + graphTailSize;
        for (var i = 0; i < headers.Length; i++)
        {
            var raw = initializers[i].ByteLength;
            headerSizes[i] = headers[i].CalculateSize();
            tensorSizes[i] = headerSizes[i] + 1 + VarintSize(raw) + raw;
            graphSize += 1 + VarintSize(tensorSizes[i]) + tensorSizes[i];
        }
        var total = modelHeadSize + 1 + VarintSize(graphSize) + graphSize + modelTailSize;
        if (total > Array.MaxLength)
            throw new Graph.CompileException($"the model would take {total:N0} bytes; an ONNX file holds at most 2 GiB");

        var output = GC.AllocateUninitializedArray<byte>((int)total);
        var position = 0;
        position += WriteMessage(modelHead, modelHeadSize, output, position);
        output[position++] = GraphTag;
        position += WriteVarint(graphSize, output, position);
        position += WriteMessage(graphHead, graphHeadSize, output, position);

        var regions = new (int Offset, int Length)[headers.Length];
        for (var i = 0; i < headers.Length; i++)
        {
            output[position++] = InitializerTag;
            position += WriteVarint(tensorSizes[i], output, position);
            position += WriteMessage(headers[i], headerSizes[i], output, position);
            output[position++] = RawDataTag;
            var raw = (int)initializers[i].ByteLength;
            position += WriteVarint(raw, output, position);
            regions[i] = (position, raw);
            position += raw;
        }
        position += WriteMessage(graphTail, graphTailSize, output, position);
        position += WriteMessage(modelTail, modelTailSize, output, position);
        if (position != total)
            throw new InvalidOperationException($"model layout mismatch: wrote {position} of {total} bytes");

        // Each tensor has its own random stream, so drawing them in parallel keeps the bytes deterministic.
        Parallel.For(0, headers.Length, i =>
            initializers[i].WriteValues(output.AsSpan(regions[i].Offset, regions[i].Length), seed));
        return output;
    }

    private static int WriteMessage(IMessage message, int size, byte[] output, int position)
    {
        message.WriteTo(output.AsSpan(position, size));
        return size;
    }

    private static int VarintSize(long value) => CodedOutputStream.ComputeUInt64Size((ulong)value);

    private static int WriteVarint(long value, byte[] output, int position)
    {
        var v = (ulong)value;
        var start = position;
        while (v >= 0x80)
        {
            output[position++] = (byte)(v | 0x80);
            v >>= 7;
        }
        output[position++] = (byte)v;
        return position - start;
    }
}
