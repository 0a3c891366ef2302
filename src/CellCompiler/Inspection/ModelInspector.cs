using System.Globalization;
using CellCompiler.Input;
using CellCompiler.OnnxFormat;

namespace CellCompiler.Inspection;

/// <summary>
/// Reads any ONNX model and reports its interface, op counts, initializer figures and MACs by the
/// rules of contract section 4 (see <see cref="ModelInspection"/>). Shapes come from the model
/// itself (inputs, outputs, value_info, initializers) completed by <see cref="ShapePropagation"/>;
/// a node whose MACs need a shape that stays unknown is listed, and the total is then null.
/// </summary>
public static class ModelInspector
{
    /// <summary>Ops that multiply-accumulate but that the section-4 rules leave out of the MACs total.</summary>
    private static readonly HashSet<string> MacOpsOutsideRules = new(StringComparer.Ordinal)
    {
        "Conv", "Gemm",             // outside the default domain only (e.g. a layout-specific Conv)
        "MatMul",                   // section 4 counts Conv and Gemm only
        "ConvTranspose", "ConvInteger", "QLinearConv", "MatMulInteger", "QLinearMatMul", "DeformConv",
        "Einsum", "LSTM", "GRU", "RNN", "Attention", "MultiHeadAttention", "FusedConv", "FusedGemm",
        "FusedMatMul", "NhwcConv",
    };

    /// <summary>Reads and inspects a model file, pipe or device; every failure is an <see cref="InputException"/> naming it.</summary>
    public static ModelInspection InspectFile(string path)
    {
        var (proto, bytes) = ModelFileReader.Read(path);
        return Inspect(proto, bytes, path);
    }

    /// <summary>Inspects a serialized model; a model that cannot be read is an <see cref="InputException"/> naming <paramref name="source"/>.</summary>
    public static ModelInspection Inspect(byte[] model, string source = "model") =>
        Inspect(ModelFileReader.Parse(model, source), model.LongLength, source);

    private static ModelInspection Inspect(ModelProto proto, long modelBytes, string source)
    {
        var graph = proto.Graph;

        var propagation = ShapePropagation.Run(graph);
        var (shapes, coverage) = (propagation.Table, propagation.Coverage);
        var initializerNames = graph.Initializer.Select(t => t.Name).ToHashSet(StringComparer.Ordinal);

        // Op counts over the main graph; nodes inside subgraphs are counted apart.
        var opCounts = new SortedDictionary<string, int>(StringComparer.Ordinal);
        var outside = new SortedDictionary<string, int>(StringComparer.Ordinal);
        var subgraphNodes = 0;
        foreach (var node in graph.Node)
        {
            var key = OpKey(node);
            opCounts[key] = opCounts.GetValueOrDefault(key) + 1;
            var counted = IsDefaultDomain(node.Domain) && node.OpType is ("Conv" or "Gemm");
            if (!counted && MacOpsOutsideRules.Contains(node.OpType))
                outside[key] = outside.GetValueOrDefault(key) + 1;
            foreach (var subgraph in OnnxAttributes.Subgraphs(node))
                subgraphNodes += CountNodes(subgraph);
        }

        var (parameters, buffers, constants, elements, external) = CountInitializers(graph, source);
        var (macsKnown, notComputed) = CountMacs(graph, shapes);

        var metadata = new OrderedDictionary<string, string>(StringComparer.Ordinal);
        foreach (var entry in proto.MetadataProps)
            metadata[entry.Key] = entry.Value;

        var inputs = graph.Input.Where(i => !initializerNames.Contains(i.Name)).Select(i => Describe(i, shapes)).ToList();
        var initializersAsInputs = graph.Input.Count(i => initializerNames.Contains(i.Name));

        var notes = new List<string>();
        if (external > 0)
            notes.Add($"{Wording.Counted(external, "initializer keeps its", "initializers keep their")} data in external files; elements are counted from the dims");
        if (constants > 0)
            notes.Add($"{Wording.Counted(constants, "element", "elements")} of int64/bool initializers (shapes, axes, indices) {(constants == 1 ? "is" : "are")} not counted as params");
        if (initializersAsInputs > 0)
            notes.Add($"{Wording.Counted(initializersAsInputs, "initializer is", "initializers are")} also listed as graph inputs (defaults a caller may override), not shown as inputs");
        if (subgraphNodes > 0)
            notes.Add($"{Wording.Counted(subgraphNodes, "node inside a subgraph (If/Loop/Scan body) is", "nodes inside subgraphs (If/Loop/Scan bodies) are")} not in the op counts or MACs");
        if (outside.Count > 0)
            notes.Add($"{string.Join(", ", outside.Select(kv => $"{kv.Key} ({kv.Value})"))} also multiply-accumulate, " +
                      "but section 4 counts only Conv and Gemm: their MACs are not in the total");
        if (coverage.Inferred > 0)
            notes.Add($"{Wording.Counted(coverage.Inferred, "tensor shape the model does not state was", "tensor shapes the model does not state were")} propagated by cellc along the graph");

        return new ModelInspection
        {
            ModelBytes = modelBytes,
            IrVersion = proto.IrVersion,
            ProducerName = proto.ProducerName,
            ProducerVersion = proto.ProducerVersion,
            Domain = proto.Domain,
            ModelVersion = proto.ModelVersion,
            GraphName = graph.Name,
            OpsetImports = proto.OpsetImport.Select(o => new OpsetImport(o.Domain, o.Version)).ToList(),
            Inputs = inputs,
            Outputs = graph.Output.Select(o => Describe(o, shapes)).ToList(),
            InitializersAsInputs = initializersAsInputs,
            NodeCount = graph.Node.Count,
            OpCounts = opCounts,
            SubgraphNodes = subgraphNodes,
            InitializerCount = graph.Initializer.Count,
            InitializerElements = elements,
            Params = parameters,
            Buffers = buffers,
            ConstantElements = constants,
            ExternalDataInitializers = external,
            Macs = notComputed.Count == 0 ? macsKnown : null,
            MacsKnown = macsKnown,
            MacsNotComputed = notComputed,
            OpsOutsideMacRules = outside,
            Shapes = coverage,
            UnknownShapeSources = propagation.Gaps,
            Metadata = metadata,
            Notes = notes,
        };
    }

    private static bool IsDefaultDomain(string domain) => domain is "" or "ai.onnx";

    private static string OpKey(NodeProto node) => IsDefaultDomain(node.Domain) ? node.OpType : $"{node.Domain}:{node.OpType}";

    private static int CountNodes(GraphProto graph)
    {
        var count = graph.Node.Count;
        foreach (var node in graph.Node)
            foreach (var subgraph in OnnxAttributes.Subgraphs(node))
                count += CountNodes(subgraph);
        return count;
    }

    private static TensorInfo Describe(ValueInfoProto info, ShapeTable shapes)
    {
        var elemType = info.Type?.ValueCase == TypeProto.ValueOneofCase.TensorType
            ? OnnxAttributes.ElemTypeName(info.Type.TensorType.ElemType)
            : info.Type is null ? "unknown" : "non-tensor";
        // What the model states, completed by propagation where it states nothing or leaves gaps.
        var dims = shapes[info.Name] ?? ShapePropagation.DeclaredShape(info);
        return new TensorInfo(info.Name, elemType, dims);
    }

    /// <summary>
    /// Section 4 on any model: BatchNormalization inputs 3 and 4 (running mean and variance) are
    /// buffers; int64 and bool initializers are constants (shapes, axes, indices, never trained);
    /// every other initializer is params.
    /// </summary>
    private static (long Params, long Buffers, long Constants, long Elements, int External) CountInitializers(GraphProto graph, string source)
    {
        var bufferNames = new HashSet<string>(StringComparer.Ordinal);
        foreach (var node in graph.Node)
            if (IsDefaultDomain(node.Domain) && node.OpType == "BatchNormalization")
                for (var i = 3; i <= 4 && i < node.Input.Count; i++)
                    bufferNames.Add(node.Input[i]);

        long parameters = 0, buffers = 0, constants = 0, elements = 0;
        var external = 0;
        try
        {
            foreach (var tensor in graph.Initializer)
            {
                var n = OnnxAttributes.Elements(tensor)
                    ?? throw new InputException(source, "", $"initializer '{tensor.Name}' has dims [{string.Join(", ", tensor.Dims)}], which is not a valid tensor size");
                if (OnnxAttributes.IsExternal(tensor)) external++;
                elements = checked(elements + n);
                if (bufferNames.Contains(tensor.Name)) buffers += n;
                else if ((TensorProto.Types.DataType)tensor.DataType is TensorProto.Types.DataType.Int64 or TensorProto.Types.DataType.Bool) constants += n;
                else parameters += n;
            }
        }
        catch (OverflowException) { throw new InputException(source, "", "the initializers' element counts add up beyond 2^63"); }
        return (parameters, buffers, constants, elements, external);
    }

    /// <summary>MACs per sample of Conv and Gemm in the default domain (contract section 4).</summary>
    private static (long Known, List<UncountedNode> NotComputed) CountMacs(GraphProto graph, ShapeTable shapes)
    {
        long known = 0;
        var notComputed = new List<UncountedNode>();
        for (var index = 0; index < graph.Node.Count; index++)
        {
            var node = graph.Node[index];
            if (!IsDefaultDomain(node.Domain) || node.OpType is not ("Conv" or "Gemm")) continue;
            var name = OnnxAttributes.DisplayName(node, index);
            Dim[]? Shape(IList<string> names, int i) => i < names.Count ? shapes[names[i]] : null;
            var (macs, reason) = node.OpType switch
            {
                "Conv" => ConvMacs(Shape(node.Input, 1), Shape(node.Output, 0)),
                "Gemm" => GemmMacs(node, Shape(node.Input, 0), Shape(node.Input, 1), Shape(node.Output, 0)),
                _ => throw new InvalidOperationException($"no MAC rule for {node.OpType}"),
            };
            if (macs is { } m)
            {
                try { known = checked(known + m); }
                catch (OverflowException) { notComputed.Add(new UncountedNode(name, node.OpType, "the total exceeds 2^63")); }
            }
            else
            {
                // Where the missing shape was lost: the output's origin, else an input's.
                var lostAt = node.Output.Concat(node.Input).Select(shapes.Gap).FirstOrDefault(g => g is not null);
                notComputed.Add(new UncountedNode(name, node.OpType, reason!, lostAt));
            }
        }
        return (known, notComputed);
    }

    private static string Text(Dim[]? shape) => shape is null ? "unknown rank" : "[" + string.Join(", ", shape) + "]";

    private static long? KnownProduct(IEnumerable<Dim> dims)
    {
        long product = 1;
        foreach (var d in dims)
        {
            if (!d.IsKnown || d.Value < 0) return null;
            product = checked(product * d.Value!.Value);
        }
        return product;
    }

    private static (long?, string?) Guard(Func<(long?, string?)> count)
    {
        try { return count(); }
        catch (OverflowException) { return (null, "the count exceeds 2^63"); }
    }

    /// <summary>Conv: Cout * Hout * Wout * (Cin / group) * kH * kW, i.e. the output's spatial size times the weight's elements.</summary>
    private static (long?, string?) ConvMacs(Dim[]? weight, Dim[]? output) => Guard(() =>
    {
        if (weight is null || KnownProduct(weight) is not { } weights)
            return (null, $"the weight's shape is not known ({Text(weight)})");
        if (output is null || output.Length < 2 || KnownProduct(output.Skip(2)) is not { } spatial)
            return (null, $"the output's spatial size is not known ({Text(output)})");
        return (checked(spatial * weights), null);
    });

    /// <summary>Gemm: in * out per sample (the rows of A are samples).</summary>
    private static (long?, string?) GemmMacs(NodeProto node, Dim[]? a, Dim[]? b, Dim[]? output) => Guard(() =>
    {
        if (b is { Length: 2 } && KnownProduct(b) is { } weights) return (weights, null);
        var transA = OnnxAttributes.Int(node, "transA", 0) != 0;
        var inFeatures = a is { Length: 2 } ? a[transA ? 0 : 1] : Dim.Unknown;
        var outFeatures = output is { Length: 2 } ? output[1] : Dim.Unknown;
        if (inFeatures.IsKnown && outFeatures.IsKnown) return (checked(inFeatures.Value!.Value * outFeatures.Value!.Value), null);
        return (null, $"the matrix shapes are not known (A {Text(a)}, B {Text(b)})");
    });

}
