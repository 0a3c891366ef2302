namespace CellCompiler.Inspection;

/// <summary>
/// Constant folding of the small integer tensors that exporters use to compute shapes at run
/// time: torch.onnx.export writes `x.view(x.size(0), 2, c // 2, h, w)` as Shape -> Gather ->
/// Div -> Cast -> Unsqueeze -> Concat -> Reshape, and `x.chunk(2, 1)` as Slice with ends made by
/// Add, Div and Mul. Elements may be symbolic (the batch), see <see cref="DimMath"/>.
/// Ops outside this set give no value (the consumer's shape then stays unknown, with the reason).
/// </summary>
internal static class ValueFolding
{
    /// <summary>The value of the node's first output, or null when it is not a small integer tensor we can know.</summary>
    public static FoldedValue? Fold(NodeContext c) => c.Op switch
    {
        "Constant" => Constant(c),
        // Ops that only regroup elements keep them in order.
        "Identity" or "Squeeze" or "Unsqueeze" or "Reshape" or "Flatten" => c.Values(0),
        // Our values are integers, whatever their type: rounding changes nothing.
        "Floor" or "Ceil" or "Round" => c.Values(0),
        "Cast" => Cast(c),
        "Shape" => Shape(c),
        "Size" => c.In(0) is { } x ? new FoldedValue([DimMath.Product(x)], Integral: true) : null,
        "Gather" => Gather(c),
        "Concat" => Concat(c),
        "Slice" => Slice(c),
        "Add" => Elementwise(c, DimMath.Add),
        "Sub" => Elementwise(c, DimMath.Sub),
        "Mul" => Elementwise(c, DimMath.Mul),
        "Div" => Elementwise(c, (a, b) => DimMath.Div(a, b, Integral(c))),
        "Mod" => Elementwise(c, (a, b) => DimMath.Mod(a, b, c.Int("fmod", 0) != 0)),
        "Max" => Elementwise(c, DimMath.Max),
        "Min" => Elementwise(c, DimMath.Min),
        "Equal" => Elementwise(c, DimMath.Equal) is { } e ? e with { Integral = true } : null,
        "Neg" => Map(c.Values(0), DimMath.Neg),
        "Abs" => Map(c.Values(0), DimMath.Abs),
        "Where" => Where(c),
        "ConstantOfShape" => ConstantOfShape(c),
        "Range" => Range(c),
        "ReduceProd" => Reduce(c, DimMath.Mul),
        "ReduceSum" => Reduce(c, DimMath.Add),
        "ReduceMax" => Reduce(c, DimMath.Max),
        "ReduceMin" => Reduce(c, DimMath.Min),
        _ => null,
    };

    private static bool Integral(NodeContext c)
    {
        for (var i = 0; i < c.Inputs; i++)
            if (c.Values(i) is { Integral: false }) return false;
        return true;
    }

    private static FoldedValue? Constant(NodeContext c)
    {
        if (OnnxAttributes.Find(c.Node, "value") is { } value)
            return value.T is { } tensor ? OnnxAttributes.IntegerValues(tensor) : null;
        if (OnnxAttributes.Find(c.Node, "value_ints") is { } ints)
            return ints.Ints.Count <= ShapeTable.MaxFoldedElements ? FoldedValue.Of(ints.Ints) : null;
        if (OnnxAttributes.Find(c.Node, "value_int") is { } scalar)
            return FoldedValue.Of([scalar.I]);
        return null;
    }

    private static FoldedValue? Cast(NodeContext c)
    {
        if (c.Values(0) is not { } values) return null;
        var to = c.Int("to", 0);
        if (OnnxAttributes.IsFloat(to)) return values with { Integral = false };
        if (!OnnxAttributes.IsIntegral(to)) return null;
        // To bool: non-zero is 1; a symbolic size is not known to be non-zero.
        var elements = to == 9 ? values.Elements.Select(d => d.Value is { } v ? Dim.Of(v != 0 ? 1 : 0) : Dim.Unknown).ToArray() : values.Elements;
        return new FoldedValue(elements, Integral: true);
    }

    private static FoldedValue? Shape(NodeContext c)
    {
        if (c.In(0) is not { } x || ShapeRules.ShapeRange(c, x.Length) is not var (start, end)) return null;
        return new FoldedValue(x[start..end], Integral: true);
    }

    /// <summary>Gather along axis 0 of a 1-D value (the way shapes are indexed); indices of any shape.</summary>
    private static FoldedValue? Gather(NodeContext c)
    {
        if (c.Values(0) is not { } data || c.In(0) is not { Length: 1 } || c.Numbers(1) is not { } indices) return null;
        if (NodeContext.Axis(c.Int("axis", 0), 1) != 0) return null;
        var picked = new Dim[indices.Length];
        for (var i = 0; i < indices.Length; i++)
        {
            var index = indices[i] < 0 ? indices[i] + data.Elements.Length : indices[i];
            if (index < 0 || index >= data.Elements.Length) return null;
            picked[i] = data.Elements[index];
        }
        return new FoldedValue(picked, data.Integral);
    }

    /// <summary>Concat of 1-D values (axis 0).</summary>
    private static FoldedValue? Concat(NodeContext c)
    {
        var parts = new List<Dim>();
        var integral = true;
        for (var i = 0; i < c.Inputs; i++)
        {
            if (c.Values(i) is not { } part || c.In(i) is not { Length: 1 }) return null;
            parts.AddRange(part.Elements);
            integral &= part.Integral;
            if (parts.Count > ShapeTable.MaxFoldedElements) return null;
        }
        return new FoldedValue(parts.ToArray(), integral);
    }

    /// <summary>Slice of a 1-D value along its only axis, any step.</summary>
    private static FoldedValue? Slice(NodeContext c)
    {
        if (c.Values(0) is not { } data || c.In(0) is not { Length: 1 }) return null;
        if (ShapeRules.SliceParameters(c, 1) is not { } p || p.Axes is not [0]) return null;
        var (first, count) = DimMath.SliceRange(data.Elements.Length, p.Starts[0], p.Ends[0], p.Steps[0]);
        var taken = new Dim[count];
        for (var i = 0; i < count; i++)
            taken[i] = data.Elements[first + i * p.Steps[0]];
        return new FoldedValue(taken, data.Integral);
    }

    /// <summary>Element-wise over inputs whose shapes are equal 0-D or 1-D, or where one side is a single element (broadcast).</summary>
    private static FoldedValue? Elementwise(NodeContext c, Func<Dim, Dim, Dim> apply)
    {
        if (c.Inputs < 1 || c.Values(0) is not { } result || c.In(0) is not { } shape) return null;
        for (var i = 1; i < c.Inputs; i++)
        {
            if (c.Values(i) is not { } other || c.In(i) is not { } otherShape) return null;
            result = Combine(result, shape, other, otherShape, apply);
            if (result is null) return null;
            shape = DimMath.Broadcast(shape, otherShape);
        }
        return result;
    }

    private static FoldedValue? Combine(FoldedValue a, Dim[] aShape, FoldedValue b, Dim[] bShape, Func<Dim, Dim, Dim> apply)
    {
        var (x, y) = (a.Elements, b.Elements);
        var integral = a.Integral && b.Integral;
        if (x.Length == y.Length && (x.Length == 1 || (aShape.Length <= 1 && bShape.Length <= 1)))
            return new FoldedValue(x.Select((d, i) => apply(d, y[i])).ToArray(), integral);
        if (y.Length == 1) return new FoldedValue(x.Select(d => apply(d, y[0])).ToArray(), integral);
        if (x.Length == 1) return new FoldedValue(y.Select(d => apply(x[0], d)).ToArray(), integral);
        return null;
    }

    private static FoldedValue? Map(FoldedValue? values, Func<Dim, Dim> apply) =>
        values is null ? null : values with { Elements = values.Elements.Select(apply).ToArray() };

    private static FoldedValue? Where(NodeContext c)
    {
        if (c.Values(0) is not { } condition || c.Values(1) is not { } x || c.Values(2) is not { } y) return null;
        var n = new[] { condition.Elements.Length, x.Elements.Length, y.Elements.Length }.Max();
        Dim At(FoldedValue v, int i) => v.Elements.Length == 1 ? v.Elements[0] : v.Elements[i];
        if (new[] { condition, x, y }.Any(v => v.Elements.Length != 1 && v.Elements.Length != n)) return null;
        var picked = new Dim[n];
        for (var i = 0; i < n; i++)
            picked[i] = At(condition, i).Value switch { null => Dim.Unknown, 0 => At(y, i), _ => At(x, i) };
        return new FoldedValue(picked, x.Integral && y.Integral);
    }

    private static FoldedValue? ConstantOfShape(NodeContext c)
    {
        if (c.Numbers(0) is not { } shape || shape.Any(d => d < 0)) return null;
        long count = 1;
        foreach (var d in shape)
        {
            count = checked(count * d);
            if (count > ShapeTable.MaxFoldedElements) return null;
        }
        // The default fill is a float 0; an integer fill comes from the value attribute.
        var fill = OnnxAttributes.Find(c.Node, "value") is { T: { } tensor } ? OnnxAttributes.IntegerValues(tensor) : new FoldedValue([Dim.Of(0)], Integral: false);
        if (fill is not { Elements.Length: 1 }) return null;
        return new FoldedValue(Enumerable.Repeat(fill.Elements[0], (int)count).ToArray(), fill.Integral);
    }

    private static FoldedValue? Range(NodeContext c)
    {
        if (c.Numbers(0) is not [var start] || c.Numbers(1) is not [var limit] || c.Numbers(2) is not [var delta] || delta == 0) return null;
        if (ShapeRules.RangeCount(start, limit, delta) is not { } count || count > ShapeTable.MaxFoldedElements) return null;
        var values = new long[count];
        for (var i = 0; i < count; i++)
            values[i] = checked(start + i * delta);
        return FoldedValue.Of(values) with { Integral = Integral(c) };
    }

    /// <summary>A reduction of a 1-D value over its only axis (no axes, or axes [0]).</summary>
    private static FoldedValue? Reduce(NodeContext c, Func<Dim, Dim, Dim> combine)
    {
        if (c.Values(0) is not { Elements.Length: > 0 } values || c.In(0) is not { Length: 1 }) return null;
        var axes = c.Ints("axes") ?? (c.Has(1) ? c.Numbers(1) : []);
        if (axes is null || axes.Any(a => a is not (0 or -1))) return null;
        if (axes.Length == 0 && c.Int("noop_with_empty_axes", 0) != 0) return values;
        var result = values.Elements[0];
        for (var i = 1; i < values.Elements.Length; i++)
            result = combine(result, values.Elements[i]);
        return new FoldedValue([result], values.Integral);
    }
}
