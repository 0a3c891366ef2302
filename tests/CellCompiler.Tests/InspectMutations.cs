using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.OnnxFormat;
using CellCompiler.Tests.Support;
using Google.Protobuf;
using static CellCompiler.Tests.InspectGraphs;

namespace CellCompiler.Tests;

/// <summary>
/// Hostile ONNX files for `inspect`: valid seeds mutated on the protobuf wire format (byte flips,
/// truncations, wrong lengths, huge declared lengths, extreme varints, wrong wire types, duplicated
/// and inserted fields, deep nesting), and models crafted to stress the shape rules and the text
/// layout. Deterministic for a seed, so a failure names its case and can be replayed.
/// </summary>
internal static class InspectMutations
{
    /// <summary>A field of the wire format: where its tag, its length or value, and its content lie.</summary>
    private sealed record Field(int Tag, int TagSize, int WireType, int Value, int ValueSize, int Content, int ContentLength);

    public static readonly string[] Kinds =
    [
        // On the bytes: the parser's side.
        "flip", "truncate", "wrong-length", "huge-length", "extreme-varint", "wire-type", "duplicate", "insert", "deep-nesting",
        // On the parsed model, written back: valid protobuf that reaches the shape rules and figures.
        "op-type", "attribute", "rewire", "int-values", "dims", "drop-node", "swap-nodes",
    ];

    private static readonly string[] OpTypes =
    [
        "Conv", "ConvTranspose", "Gemm", "MatMul", "Reshape", "Transpose", "Slice", "Split", "Pad", "Concat", "Gather", "Shape",
        "Size", "Unsqueeze", "Squeeze", "Flatten", "Expand", "Tile", "Range", "ConstantOfShape", "ReduceMean", "ReduceProd",
        "ArgMax", "TopK", "Resize", "DepthToSpace", "SpaceToDepth", "MaxPool", "AveragePool", "GlobalAveragePool", "Add",
        "Div", "Mod", "Where", "Equal", "Cast", "NonZero", "If", "Constant", "BatchNormalization", "Mystery",
    ];

    private static readonly string[] AttributeNames =
    [
        "axis", "axes", "perm", "pads", "strides", "kernel_shape", "dilations", "group", "split", "num_outputs", "starts", "ends",
        "to", "keepdims", "transA", "transB", "allowzero", "blocksize", "start", "end", "output_shape", "output_padding",
        "ceil_mode", "fmod", "auto_pad", "value", "value_ints", "value_int",
    ];

    private static readonly long[] Numbers = [-3, -2, -1, 0, 1, 2, 3, 4, 5, 7, 8, 64, 1L << 31, 1L << 40, long.MaxValue, long.MinValue];

    /// <summary>Seeds: the hand-built channel shuffle (shape arithmetic) and one of our compiled models (small skeleton).</summary>
    public static IReadOnlyList<byte[]> Seeds { get; } = BuildSeeds();

    private static List<byte[]> BuildSeeds()
    {
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-h3.json"));
        var skeleton = SkeletonPresets.All["proxy"] with
        {
            Input = new InputSpec(3, 8, 8),
            Stages = [new StageSpec(1, 4), new StageSpec(1, 4), new StageSpec(1, 8)],
        };
        return [ChannelShuffle().ToByteArray(), Compiler.Compile(genotype, skeleton).OnnxBytes];
    }

    /// <summary>Case <paramref name="index"/> of the corpus for <paramref name="seed"/>: a seed with one to three mutations.</summary>
    public static (string Description, byte[] Bytes) Case(int seed, int index)
    {
        // Not HashCode.Combine: it is seeded afresh in every process, so the corpus would change from run to run.
        var random = new Random(unchecked(seed * 1_000_003 + index));
        var source = random.Next(Seeds.Count);
        var bytes = Seeds[source];
        var kinds = new List<string>();
        for (var n = random.Next(1, 4); n > 0; n--)
        {
            var kind = Kinds[random.Next(Kinds.Length)];
            kinds.Add(kind);
            bytes = Mutate(bytes, kind, random);
        }
        return ($"seed {seed} case {index} (seed model {source}: {string.Join(", ", kinds)})", bytes);
    }

    public static byte[] Mutate(byte[] bytes, string kind, Random random)
    {
        if (bytes.Length == 0) return bytes;
        var fields = Scan(bytes);
        Field? Pick(Func<Field, bool> where)
        {
            var matching = fields.Where(where).ToList();
            return matching.Count == 0 ? null : matching[random.Next(matching.Count)];
        }
        switch (kind)
        {
            case "flip":
            {
                var copy = (byte[])bytes.Clone();
                for (var n = random.Next(1, 9); n > 0; n--)
                    copy[random.Next(copy.Length)] = (byte)random.Next(256);
                return copy;
            }
            case "truncate":
                return bytes[..random.Next(bytes.Length)];
            case "wrong-length" when Pick(f => f.WireType == 2) is { } f:
            {
                var delta = random.Next(1, 17) * (random.Next(2) == 0 ? -1 : 1);
                return Splice(bytes, f.Value, f.ValueSize, Varint((ulong)Math.Max(0, f.ContentLength + delta)));
            }
            case "huge-length" when Pick(f => f.WireType == 2) is { } f:
            {
                ulong[] huge = [int.MaxValue, 1UL << 31, (1UL << 32) + 5, 1UL << 62, long.MaxValue, ulong.MaxValue];
                return Splice(bytes, f.Value, f.ValueSize, Varint(huge[random.Next(huge.Length)]));
            }
            case "extreme-varint" when Pick(f => f.WireType == 0) is { } f:
            {
                ulong[] extreme = [0, ulong.MaxValue, long.MaxValue, 1UL << 31, 1UL << 40, unchecked((ulong)int.MinValue), 3];
                return Splice(bytes, f.Value, f.ValueSize, Varint(extreme[random.Next(extreme.Length)]));
            }
            case "wire-type" when Pick(_ => true) is { } f:
            {
                var tag = ((ulong)f.Tag << 3) | (uint)random.Next(8);
                return Splice(bytes, f.Value - f.TagSize, f.TagSize, Varint(tag));
            }
            case "duplicate" when Pick(_ => true) is { } f:
            {
                var start = f.Value - f.TagSize;
                var end = f.WireType == 2 ? f.Content + f.ContentLength : f.Value + f.ValueSize;
                return Splice(bytes, end, 0, bytes[start..end]);
            }
            case "insert":
            {
                var garbage = new byte[random.Next(1, 33)];
                random.NextBytes(garbage);
                return Splice(bytes, random.Next(bytes.Length + 1), 0, garbage);
            }
            case "deep-nesting":
                return random.Next(3) switch
                {
                    // Start-group tags nested far beyond any recursion limit.
                    0 => [.. bytes, .. Enumerable.Repeat(Varint((99UL << 3) | 3), 200_000).SelectMany(b => b)],
                    // The graph held in a node attribute, holding a graph, ... beyond the parser's 100 levels.
                    1 => NestedGraphs(120).ToByteArray(),
                    // Length-delimited fields inside each other (an unknown field of the model), each wrapping the next.
                    _ => [.. bytes, .. NestedLengths(5_000)],
                };
            case "op-type" or "attribute" or "rewire" or "int-values" or "dims" or "drop-node" or "swap-nodes":
                return MutateModel(bytes, kind, random);
            default:
                return bytes;   // no field of the kind asked for: leave the bytes as they are
        }
    }

    /// <summary>An edit of the parsed model (bytes that no longer parse are left as they are).</summary>
    private static byte[] MutateModel(byte[] bytes, string kind, Random random)
    {
        ModelProto model;
        try { model = ModelProto.Parser.ParseFrom(bytes); }
        catch (InvalidProtocolBufferException) { return bytes; }
        var graph = model.Graph;
        if (graph is null || graph.Node.Count == 0) return bytes;
        var node = graph.Node[random.Next(graph.Node.Count)];
        long Number() => Numbers[random.Next(Numbers.Length)];
        switch (kind)
        {
            case "op-type":
                node.OpType = OpTypes[random.Next(OpTypes.Length)];
                break;
            case "attribute":
            {
                var name = AttributeNames[random.Next(AttributeNames.Length)];
                if (node.Attribute.FirstOrDefault(a => a.Name == name) is { } existing) node.Attribute.Remove(existing);
                var attribute = new AttributeProto { Name = name };
                switch (random.Next(4))
                {
                    case 0: attribute.Type = AttributeProto.Types.AttributeType.Int; attribute.I = Number(); break;
                    case 1:
                        attribute.Type = AttributeProto.Types.AttributeType.Ints;
                        for (var n = random.Next(7); n > 0; n--) attribute.Ints.Add(Number());
                        break;
                    case 2: attribute.Type = AttributeProto.Types.AttributeType.String; attribute.S = ByteString.CopyFromUtf8(random.Next(2) == 0 ? "SAME_UPPER" : "VALID"); break;
                    default:
                        attribute.Type = AttributeProto.Types.AttributeType.Tensor;
                        attribute.T = Int64s("", [random.Next(3)], [.. Enumerable.Range(0, 2).Select(_ => Number())]);
                        break;
                }
                node.Attribute.Add(attribute);
                break;
            }
            case "rewire":
            {
                var tensors = graph.Node.SelectMany(n => n.Output).Concat(graph.Initializer.Select(t => t.Name)).Concat(["", "nowhere"]).ToList();
                if (node.Input.Count == 0) node.Input.Add(tensors[random.Next(tensors.Count)]);
                else node.Input[random.Next(node.Input.Count)] = tensors[random.Next(tensors.Count)];
                break;
            }
            case "int-values":
            {
                var integers = graph.Initializer.Where(t => t.DataType == 7).ToList();
                if (integers.Count == 0) return bytes;
                var tensor = integers[random.Next(integers.Count)];
                if (tensor.Int64Data.Count > 0) tensor.Int64Data[random.Next(tensor.Int64Data.Count)] = Number();
                else tensor.Int64Data.Add(Number());   // data that no longer matches the dims
                break;
            }
            case "dims":
            {
                var tensors = graph.Initializer.ToList();
                if (tensors.Count == 0) return bytes;
                var tensor = tensors[random.Next(tensors.Count)];
                if (tensor.Dims.Count == 0 || random.Next(4) == 0) tensor.Dims.Add(Number());
                else tensor.Dims[random.Next(tensor.Dims.Count)] = Number();
                break;
            }
            case "drop-node":
                graph.Node.Remove(node);
                break;
            default:
            {
                var other = random.Next(graph.Node.Count);
                var index = graph.Node.IndexOf(node);
                (graph.Node[index], graph.Node[other]) = (graph.Node[other], graph.Node[index]);
                break;
            }
        }
        return model.ToByteArray();
    }

    /// <summary>Every field of the message and, where the content parses as fields itself, of the messages inside.</summary>
    private static List<Field> Scan(byte[] bytes)
    {
        var fields = new List<Field>();
        ScanInto(bytes, 0, bytes.Length, fields, depth: 0);
        return fields;
    }

    private static bool ScanInto(byte[] bytes, int start, int end, List<Field> fields, int depth)
    {
        var found = new List<Field>();
        var position = start;
        while (position < end)
        {
            if (!ReadVarint(bytes, position, end, out var tag, out var tagSize) || tag >> 3 == 0) return false;
            var wire = (int)(tag & 7);
            var value = position + tagSize;
            switch (wire)
            {
                case 0:
                    if (!ReadVarint(bytes, value, end, out _, out var size)) return false;
                    found.Add(new Field((int)(tag >> 3), tagSize, 0, value, size, value + size, 0));
                    position = value + size;
                    break;
                case 1 or 5:
                    var width = wire == 1 ? 8 : 4;
                    if (value + width > end) return false;
                    found.Add(new Field((int)(tag >> 3), tagSize, wire, value, width, value + width, 0));
                    position = value + width;
                    break;
                case 2:
                    if (!ReadVarint(bytes, value, end, out var length, out var lengthSize) || length > (ulong)(end - value - lengthSize)) return false;
                    found.Add(new Field((int)(tag >> 3), tagSize, 2, value, lengthSize, value + lengthSize, (int)length));
                    position = value + lengthSize + (int)length;
                    break;
                default:
                    return false;
            }
        }
        fields.AddRange(found);
        // Message-like contents (not weight data: keep the scan cheap) are scanned for their own fields.
        if (depth < 12)
            foreach (var f in found.Where(f => f.WireType == 2 && f.ContentLength is > 0 and < 4096))
                ScanInto(bytes, f.Content, f.Content + f.ContentLength, fields, depth + 1);
        return true;
    }

    private static bool ReadVarint(byte[] bytes, int position, int end, out ulong value, out int size)
    {
        value = 0;
        for (size = 0; size < 10 && position + size < end; size++)
        {
            var b = bytes[position + size];
            value |= (ulong)(b & 0x7F) << (7 * size);
            if (b < 0x80) { size++; return true; }
        }
        return false;
    }

    private static byte[] Varint(ulong value)
    {
        var result = new List<byte>();
        do
        {
            var b = (byte)(value & 0x7F);
            value >>= 7;
            result.Add(value == 0 ? b : (byte)(b | 0x80));
        } while (value != 0);
        return result.ToArray();
    }

    private static byte[] Splice(byte[] bytes, int at, int remove, byte[] insert) =>
        [.. bytes.AsSpan(0, at), .. insert, .. bytes.AsSpan(at + remove)];

    private static byte[] NestedLengths(int depth)
    {
        // Built inside out: each level is field 99 (unknown to ModelProto), length-delimited, around the next.
        var inner = Array.Empty<byte>();
        for (var i = 0; i < depth; i++)
            inner = [.. Varint((99UL << 3) | 2), .. Varint((ulong)inner.Length), .. inner];
        return inner;
    }

    /// <summary>A model whose node holds a graph in an attribute, whose node holds a graph, ... <paramref name="depth"/> deep.</summary>
    public static ModelProto NestedGraphs(int depth)
    {
        var graph = new GraphProto { Name = "leaf" };
        for (var i = 0; i < depth; i++)
        {
            var node = Node($"if{i}", "If", ["cond"], $"out{i}");
            node.Attribute.Add(new AttributeProto { Name = "then_branch", Type = AttributeProto.Types.AttributeType.Graph, G = graph });
            graph = new GraphProto { Name = $"level{i}" };
            graph.Node.Add(node);
        }
        graph.Input.Add(Value("cond"));
        return Model(graph, 17);
    }

    /// <summary>Models that are valid protobuf but hostile to the shape rules, the figures or the text layout.</summary>
    public static IReadOnlyDictionary<string, ModelProto> Crafted()
    {
        var crafted = new Dictionary<string, ModelProto>(StringComparer.Ordinal);
        ModelProto Shuffle() => ChannelShuffle();

        var overflow = Shuffle();
        overflow.Graph.Initializer.Add(Weight("empty", 0));
        overflow.Graph.Initializer[^1].Dims.Clear();
        overflow.Graph.Initializer[^1].Dims.AddRange([1L << 40, 1L << 40]);   // 2^80 elements: beyond a long
        crafted["initializer-elements-overflow"] = overflow;

        var negative = Shuffle();
        negative.Graph.Initializer[0].Dims[0] = -8;
        crafted["negative-initializer-dim"] = negative;

        var hugeButCountable = Shuffle();
        hugeButCountable.Graph.Initializer[0].Dims.Clear();
        hugeButCountable.Graph.Initializer[0].Dims.AddRange([1L << 31, 1L << 31, 1, 1]);   // 2^62 elements, no data to read
        crafted["huge-dims-without-data"] = hugeButCountable;

        var rank = Shuffle();
        rank.Graph.ValueInfo.Add(Value("c", [.. Enumerable.Repeat<object>(2, 100_000)]));
        crafted["value-info-of-rank-100000"] = rank;

        var unsqueezes = Shuffle();
        unsqueezes.Graph.Initializer.Add(Int64s("many_axes", [64], Enumerable.Range(0, 64).Select(i => (long)i).ToArray()));
        for (var i = 0; i < 2_000; i++)
            unsqueezes.Graph.Node.Add(Node($"grow{i}", "Unsqueeze", [i == 0 ? "c" : $"g{i - 1}", "many_axes"], $"g{i}"));
        crafted["unsqueeze-chain-growing-rank"] = unsqueezes;

        var arithmetic = Shuffle();
        arithmetic.Graph.Initializer.Add(Int64s("big", [], long.MaxValue));
        arithmetic.Graph.Initializer.Add(Int64s("min", [], long.MinValue));
        arithmetic.Graph.Initializer.Add(Int64s("minus1", [], -1));
        arithmetic.Graph.Initializer.Add(Int64s("zero", [], 0));
        arithmetic.Graph.Initializer.Add(Int64s("trillion", [1], 1_000_000_000_000));
        foreach (var (op, a, b) in new[] { ("Add", "big", "big"), ("Mul", "big", "big"), ("Div", "min", "minus1"), ("Div", "big", "zero"),
                     ("Mod", "min", "minus1"), ("Mod", "big", "zero"), ("Sub", "min", "big"), ("Neg", "min", ""), ("Abs", "min", "") })
            arithmetic.Graph.Node.Add(Node($"{op}-{a}-{b}", op, b.Length > 0 ? [a, b] : [a], $"{op}-{a}-{b}.out"));
        arithmetic.Graph.Node.Add(Node("fill", "ConstantOfShape", ["trillion"], "filled"));
        arithmetic.Graph.Node.Add(Node("range", "Range", ["min", "big", "big"], "ranged"));
        arithmetic.Graph.Node.Add(Node("range0", "Range", ["zero", "big", "zero"], "ranged0"));
        arithmetic.Graph.Node.Add(Node("slice0", "Slice", ["c", "min", "big", "zero", "zero"], "sliced0"));
        arithmetic.Graph.Node.Add(Node("sliceMin", "Slice", ["c", "big", "min", "zero", "min"], "slicedMin"));
        arithmetic.Graph.Node.Add(Node("gatherFar", "Gather", ["hw", "big"], "gathered"));
        arithmetic.Graph.Node.Add(Node("reshapeBad", "Reshape", ["c", "trillion"], "reshaped"));
        arithmetic.Graph.Node.Add(Node("tile", "Tile", ["c", "trillion"], "tiled"));
        arithmetic.Graph.Node.Add(Node("split0", "Split", ["c"], [], Int("num_outputs", 0)));
        arithmetic.Graph.Node.Add(Node("expand", "Expand", ["c", "trillion"], "expanded"));
        crafted["extreme-shape-arithmetic"] = arithmetic;

        var windows = Shuffle();
        windows.Graph.Node.Add(Node("zeroStride", "Conv", ["c", "conv1.w"], "z1", Ints("strides", 0, 0)));
        windows.Graph.Node.Add(Node("hugeKernel", "MaxPool", ["c"], "z2", Ints("kernel_shape", long.MaxValue, long.MaxValue)));
        windows.Graph.Node.Add(Node("hugePads", "Conv", ["c", "conv1.w"], "z3", Ints("pads", long.MaxValue, 1, long.MaxValue, 1)));
        windows.Graph.Node.Add(Node("hugeDilation", "Conv", ["c", "conv1.w"], "z4", Ints("dilations", long.MaxValue, 2)));
        windows.Graph.Node.Add(Node("badTranspose", "Transpose", ["c"], "z5", Ints("perm", 0, 0, 1, 2)));
        windows.Graph.Node.Add(Node("badGemm", "Gemm", ["c", "c"], "z6"));
        crafted["extreme-windows"] = windows;

        var cycle = Shuffle();
        cycle.Graph.Node.Add(Node("selfish", "Relu", ["loop"], "loop"));
        cycle.Graph.Node.Insert(0, Node("early", "Add", ["late", "images"], "early.out"));
        cycle.Graph.Node.Add(Node("late-maker", "Relu", ["early.out"], "late"));
        crafted["cycles-and-forward-references"] = cycle;

        var names = Shuffle();
        var escape = "\u001b]52;c;ZWNobyBvd25lZA==\u0007\u001b[2J\u001b[H\u202E\u2066";
        names.ProducerName = escape + new string('p', 100_000);
        names.Graph.Name = escape;
        names.Graph.Node[0].Name = escape + "conv";
        names.Graph.Input[0].Type.TensorType.Shape.Dim[0].DimParam = escape;
        for (var i = 0; i < 3_000; i++)
            names.MetadataProps.Add(new StringStringEntryProto { Key = $"{escape}key{i}", Value = new string('v', i) + escape });
        crafted["escape-sequences-and-long-text"] = names;

        var subgraphs = NestedGraphs(30);   // within the parser's limit: read, and counted as subgraph nodes
        crafted["subgraphs-30-deep"] = subgraphs;

        var empty = new ModelProto { IrVersion = 8, Graph = new GraphProto() };
        empty.OpsetImport.Add(new OperatorSetIdProto { Version = 17 });
        crafted["empty-graph"] = empty;
        return crafted;
    }
}
