using System.Buffers.Binary;
using CellCompiler.OnnxFormat;

namespace CellCompiler.Inspection;

/// <summary>Reads node attributes, initializer sizes and small integer constants of any ONNX model.</summary>
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

    /// <summary>
    /// The values of a small integer or bool tensor stored in the model (initializers, Constant
    /// nodes), or null: external data, more than <see cref="ShapeTable.MaxFoldedElements"/>
    /// elements, a floating-point type, or data that does not match the dims (a corrupt file).
    /// </summary>
    public static FoldedValue? IntegerValues(TensorProto tensor)
    {
        if (IsExternal(tensor) || Elements(tensor) is not { } n || n > ShapeTable.MaxFoldedElements) return null;
        var count = (int)n;
        var type = (TensorProto.Types.DataType)tensor.DataType;
        var size = type switch
        {
            TensorProto.Types.DataType.Int64 or TensorProto.Types.DataType.Uint64 => 8,
            TensorProto.Types.DataType.Int32 or TensorProto.Types.DataType.Uint32 => 4,
            TensorProto.Types.DataType.Int16 or TensorProto.Types.DataType.Uint16 => 2,
            TensorProto.Types.DataType.Int8 or TensorProto.Types.DataType.Uint8 or TensorProto.Types.DataType.Bool => 1,
            _ => 0,
        };
        if (size == 0) return null;
        var values = new long[count];
        if (tensor.RawData.Length > 0)
        {
            if (tensor.RawData.Length != (long)count * size) return null;
            var raw = tensor.RawData.Span;
            for (var i = 0; i < count; i++)
            {
                var bytes = raw.Slice(i * size, size);
                values[i] = type switch
                {
                    TensorProto.Types.DataType.Int64 => BinaryPrimitives.ReadInt64LittleEndian(bytes),
                    TensorProto.Types.DataType.Uint64 => (long)BinaryPrimitives.ReadUInt64LittleEndian(bytes),
                    TensorProto.Types.DataType.Int32 => BinaryPrimitives.ReadInt32LittleEndian(bytes),
                    TensorProto.Types.DataType.Uint32 => BinaryPrimitives.ReadUInt32LittleEndian(bytes),
                    TensorProto.Types.DataType.Int16 => BinaryPrimitives.ReadInt16LittleEndian(bytes),
                    TensorProto.Types.DataType.Uint16 => BinaryPrimitives.ReadUInt16LittleEndian(bytes),
                    TensorProto.Types.DataType.Int8 => (sbyte)bytes[0],
                    TensorProto.Types.DataType.Bool => bytes[0] != 0 ? 1 : 0,
                    _ => bytes[0],
                };
                // A uint64 above 2^63 is no shape: it would read as negative.
                if (type == TensorProto.Types.DataType.Uint64 && values[i] < 0) return null;
            }
            return FoldedValue.Of(values);
        }
        // The typed fields: int64 in int64_data, uint64 and uint32 in uint64_data, the narrower ones in int32_data.
        switch (type)
        {
            case TensorProto.Types.DataType.Int64:
                if (tensor.Int64Data.Count != count) return null;
                tensor.Int64Data.CopyTo(values, 0);
                break;
            case TensorProto.Types.DataType.Uint64 or TensorProto.Types.DataType.Uint32:
                if (tensor.Uint64Data.Count != count) return null;
                for (var i = 0; i < count; i++)
                {
                    if (tensor.Uint64Data[i] > long.MaxValue) return null;
                    values[i] = (long)tensor.Uint64Data[i];
                }
                break;
            default:
                if (tensor.Int32Data.Count != count) return null;
                for (var i = 0; i < count; i++)
                    values[i] = type == TensorProto.Types.DataType.Bool ? (tensor.Int32Data[i] != 0 ? 1 : 0) : tensor.Int32Data[i];
                break;
        }
        return FoldedValue.Of(values);
    }

    /// <summary>Integer and bool element types (TensorProto.DataType): their values can be shape arithmetic.</summary>
    public static bool IsIntegral(long type) => type is 2 or 3 or 4 or 5 or 6 or 7 or 9 or 12 or 13;

    /// <summary>Floating-point element types: Cast to one of these keeps the (integral) values but makes division exact-only.</summary>
    public static bool IsFloat(long type) => type is 1 or 10 or 11 or 16 or 17 or 18 or 19 or 20 or 23;

    /// <summary>A node as a person can find it: its name, or its position, op and outputs when it has none.</summary>
    public static string DisplayName(NodeProto node, int index) =>
        node.Name.Length > 0 ? node.Name : $"#{index} ({node.OpType} -> {string.Join(", ", node.Output.Take(3))}{(node.Output.Count > 3 ? ", ..." : "")})";

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
