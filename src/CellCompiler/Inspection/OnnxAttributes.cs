using CellCompiler.OnnxFormat;

namespace CellCompiler.Inspection;

/// <summary>Reads node attributes and small integer constants of any ONNX model.</summary>
internal static class OnnxAttributes
{
    public static AttributeProto? Find(NodeProto node, string name)
    {
        foreach (var attribute in node.Attribute)
            if (attribute.Name == name) return attribute;
        return null;
    }

    public static long Int(NodeProto node, string name, long fallback) =>
        Find(node, name) is { } a ? a.I : fallback;

    public static long[]? Ints(NodeProto node, string name) =>
        Find(node, name) is { } a ? a.Ints.ToArray() : null;

    public static string String(NodeProto node, string name, string fallback) =>
        Find(node, name) is { } a ? a.S.ToStringUtf8() : fallback;

    /// <summary>Subgraphs held by a node's attributes (If branches, Loop and Scan bodies).</summary>
    public static IEnumerable<GraphProto> Subgraphs(NodeProto node)
    {
        foreach (var attribute in node.Attribute)
        {
            if (attribute.G is not null) yield return attribute.G;
            foreach (var graph in attribute.Graphs) yield return graph;
        }
    }

    /// <summary>The elements of an initializer from its dims (always present, even for external data); null if a dim is negative or the product overflows.</summary>
    public static long? Elements(TensorProto tensor)
    {
        long elements = 1;
        foreach (var d in tensor.Dims)
        {
            if (d < 0) return null;
            try { elements = checked(elements * d); }
            catch (OverflowException) { return null; }
        }
        return elements;
    }

    public static bool IsExternal(TensorProto tensor) => tensor.DataLocation == 1 || tensor.ExternalData.Count > 0;

    /// <summary>Maximum elements of an integer tensor read as a value (shapes and axes are short).</summary>
    private const int MaxValueElements = 64;

    /// <summary>The values of a small int64 or int32 tensor stored in the model, or null.</summary>
    public static long[]? IntegerValues(TensorProto tensor)
    {
        if (IsExternal(tensor) || Elements(tensor) is not { } n || n > MaxValueElements) return null;
        var count = (int)n;
        switch ((TensorProto.Types.DataType)tensor.DataType)
        {
            case TensorProto.Types.DataType.Int64:
                if (tensor.Int64Data.Count == count) return tensor.Int64Data.ToArray();
                if (tensor.RawData.Length == count * 8)
                {
                    var raw = tensor.RawData.Span;
                    var values = new long[count];
                    for (var i = 0; i < count; i++)
                        values[i] = System.Buffers.Binary.BinaryPrimitives.ReadInt64LittleEndian(raw[(i * 8)..]);
                    return values;
                }
                return null;
            case TensorProto.Types.DataType.Int32:
                if (tensor.Int32Data.Count == count) return tensor.Int32Data.Select(v => (long)v).ToArray();
                if (tensor.RawData.Length == count * 4)
                {
                    var raw = tensor.RawData.Span;
                    var values = new long[count];
                    for (var i = 0; i < count; i++)
                        values[i] = System.Buffers.Binary.BinaryPrimitives.ReadInt32LittleEndian(raw[(i * 4)..]);
                    return values;
                }
                return null;
            default:
                return null;
        }
    }

    /// <summary>ONNX element type names (TensorProto.DataType), lower case as in the ONNX docs.</summary>
    public static string ElemTypeName(int type) => type switch
    {
        0 => "undefined",
        1 => "float",
        2 => "uint8",
        3 => "int8",
        4 => "uint16",
        5 => "int16",
        6 => "int32",
        7 => "int64",
        8 => "string",
        9 => "bool",
        10 => "float16",
        11 => "double",
        12 => "uint32",
        13 => "uint64",
        14 => "complex64",
        15 => "complex128",
        16 => "bfloat16",
        17 => "float8e4m3fn",
        18 => "float8e4m3fnuz",
        19 => "float8e5m2",
        20 => "float8e5m2fnuz",
        21 => "uint4",
        22 => "int4",
        23 => "float4e2m1",
        _ => $"type {type}",
    };
}
