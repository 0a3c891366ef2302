using CellCompiler.OnnxFormat;

namespace CellCompiler.Inspection;

/// <summary>What propagation knows: every tensor's shape, how the shapes were obtained, and where unknown ones came from.</summary>
internal sealed record PropagationResult(ShapeTable Table, ShapeCoverage Coverage, IReadOnlyList<UnknownShapes> Gaps);

/// <summary>
/// Completes the shapes a model states (inputs, outputs, value_info, initializers) by walking the
/// graph in order with <see cref="ShapeRules"/>, folding the integer shape arithmetic exporters
/// write with <see cref="ValueFolding"/>. A shape the model states wins over an inferred one,
/// dimension by dimension. Where a shape stays unknown, the tensor records the node (or graph
/// input) where it was lost and why, and tensors computed from it inherit that place.
/// </summary>
internal static class ShapePropagation
{
    public static PropagationResult Run(GraphProto graph)
    {
        var table = new ShapeTable();
        var declared = new Dictionary<string, Dim[]>(StringComparer.Ordinal);
        foreach (var info in graph.Input.Concat(graph.ValueInfo).Concat(graph.Output))
            if (DeclaredShape(info) is { Length: <= ShapeTable.MaxRank } shape)
                declared[info.Name] = shape;
        foreach (var (name, shape) in declared)
            table.Set(name, shape);
        var initializers = new HashSet<string>(StringComparer.Ordinal);
        foreach (var initializer in graph.Initializer)
        {
            initializers.Add(initializer.Name);
            if (initializer.Dims.Count <= ShapeTable.MaxRank)
                table.Set(initializer.Name, initializer.Dims.Select(d => d >= 0 ? Dim.Of(d) : Dim.Unknown).ToArray());
            table.SetValues(initializer.Name, OnnxAttributes.IntegerValues(initializer));
        }
        // A graph input the caller feeds with symbolic sizes (beyond the batch) is where its consumers' shapes are lost.
        foreach (var input in graph.Input)
            if (!initializers.Contains(input.Name) && table[input.Name] is var stated && !ShapeTable.IsComplete(stated))
                table.SetGap(input.Name, new ShapeGap(input.Name, "graph input",
                    stated is null ? "the model states no shape for it" : $"the model states its shape as [{string.Join(", ", stated)}]"));

        var seen = new HashSet<string>(StringComparer.Ordinal);
        var gapCounts = new Dictionary<ShapeGap, int>();
        var gapOrder = new List<ShapeGap>();
        int fromModel = 0, inferred = 0, unknown = 0;
        for (var index = 0; index < graph.Node.Count; index++)
        {
            var node = graph.Node[index];
            var context = new NodeContext(node, table);
            Dim[]?[] outputs;
            FoldedValue? value;
            string? malformed = null;
            try
            {
                outputs = ShapeRules.Infer(context);
                value = ValueFolding.Fold(context);
            }
            catch (Exception e) when (e is OverflowException or ArgumentException or IndexOutOfRangeException or InvalidOperationException)
            {
                (outputs, value) = ([], null);   // a malformed node: its outputs keep what the model states
                malformed = e is OverflowException
                    ? "its sizes overflow 64-bit integers"
                    : $"its attributes or inputs do not fit together as {node.OpType} expects";
            }

            ShapeGap? gap = null;
            for (var i = 0; i < node.Output.Count; i++)
            {
                var name = node.Output[i];
                if (name.Length == 0) continue;
                var stated = declared.GetValueOrDefault(name);
                table.Set(name, Merge(stated, i < outputs.Length ? outputs[i] : null));
                if (i == 0) table.SetValues(name, value);
                var complete = ShapeTable.IsComplete(table[name]);
                if (!complete) gap ??= GapAt(context, index, malformed);
                table.SetGap(name, complete ? null : gap);
                if (!seen.Add(name)) continue;
                if (ShapeTable.IsComplete(stated)) fromModel++;
                else if (complete) inferred++;
                else
                {
                    unknown++;
                    if (gapCounts.TryAdd(gap!, 1)) gapOrder.Add(gap!);
                    else gapCounts[gap!]++;
                }
            }
        }
        return new PropagationResult(table, new ShapeCoverage(fromModel, inferred, unknown),
            gapOrder.Select(g => new UnknownShapes(g, gapCounts[g])).ToList());
    }

    /// <summary>
    /// The place an incomplete output's shape was lost: where an input's shape was already lost
    /// (the first loss is the cause worth reading), else this node, with the reason its rule gave.
    /// </summary>
    private static ShapeGap GapAt(NodeContext context, int index, string? malformed)
    {
        var node = context.Node;
        var name = OnnxAttributes.DisplayName(node, index);
        if (malformed is not null) return new ShapeGap(name, node.OpType, malformed);
        for (var i = 0; i < context.Inputs; i++)
        {
            if (!context.Has(i) || ShapeTable.IsComplete(context.In(i))) continue;
            if (context.Gap(i) is { } upstream) return upstream;
            if (context.In(i) is null)
                return new ShapeGap(name, node.OpType, $"its input '{context.InputName(i)}' has no known shape (no earlier node, initializer or graph input gives one)");
        }
        return new ShapeGap(name, node.OpType, context.Why ?? "cellc could not work out the shape of its output from its inputs' shapes");
    }

    /// <summary>The shape a value_info states, or null when it states no tensor shape. A negative size is read as unknown.</summary>
    public static Dim[]? DeclaredShape(ValueInfoProto info)
    {
        if (info.Type?.ValueCase != TypeProto.ValueOneofCase.TensorType || info.Type.TensorType.Shape is not { } shape)
            return null;
        return shape.Dim.Select(d => d.ValueCase switch
        {
            TensorShapeProto.Types.Dimension.ValueOneofCase.DimValue when d.DimValue >= 0 => Dim.Of(d.DimValue),
            TensorShapeProto.Types.Dimension.ValueOneofCase.DimParam => Dim.Named(d.DimParam),
            _ => Dim.Unknown,
        }).ToArray();
    }

    /// <summary>Stated dimensions win; inferred ones fill the gaps. Different ranks: the model's statement stands.</summary>
    private static Dim[]? Merge(Dim[]? stated, Dim[]? inferred)
    {
        if (stated is null) return inferred;
        if (inferred is null || inferred.Length != stated.Length) return stated;
        var merged = new Dim[stated.Length];
        for (var i = 0; i < stated.Length; i++)
            merged[i] = stated[i].IsKnown || (!inferred[i].IsKnown && !string.IsNullOrEmpty(stated[i].Param)) ? stated[i] : inferred[i];
        return merged;
    }
}
