namespace CellCompiler.Inspection;

/// <summary>
/// The values of a small integer tensor met while propagating shapes (shapes, axes, sizes, pads),
/// in row-major order. Each element is a number, a symbolic dimension (the batch "N", read from a
/// Shape) or unknown, so that Reshape([Shape(x)[0], -1]) keeps the batch symbolic.
/// </summary>
/// <param name="Integral">False once the tensor was cast to a floating-point type (division must then be exact to stay known).</param>
internal sealed record FoldedValue(Dim[] Elements, bool Integral)
{
    public static FoldedValue Of(IEnumerable<long> numbers) => new(numbers.Select(Dim.Of).ToArray(), Integral: true);

    /// <summary>The elements as numbers, or null if any is symbolic or unknown.</summary>
    public long[]? Numbers()
    {
        var numbers = new long[Elements.Length];
        for (var i = 0; i < numbers.Length; i++)
        {
            if (Elements[i].Value is not { } v) return null;
            numbers[i] = v;
        }
        return numbers;
    }
}

/// <summary>
/// The shapes known for a graph's tensors after propagation, the folded values of small integer
/// tensors, and for each tensor whose shape stays unknown the place where it was lost.
/// Bounded against hostile models: shapes above <see cref="MaxRank"/> dimensions and values above
/// <see cref="MaxFoldedElements"/> elements are not kept (the tensor counts as unknown).
/// </summary>
internal sealed class ShapeTable
{
    /// <summary>Real networks stay far below this; a crafted chain of Unsqueeze nodes must not grow shapes without end.</summary>
    public const int MaxRank = 64;

    /// <summary>Shape arithmetic works on short vectors; larger integer tensors are data, not shapes.</summary>
    public const int MaxFoldedElements = 1024;

    private readonly Dictionary<string, Dim[]> _shapes = new(StringComparer.Ordinal);
    private readonly Dictionary<string, FoldedValue> _values = new(StringComparer.Ordinal);
    private readonly Dictionary<string, ShapeGap> _gaps = new(StringComparer.Ordinal);

    /// <summary>The tensor's shape, or null when not even its rank is known.</summary>
    public Dim[]? this[string name] => name.Length > 0 && _shapes.TryGetValue(name, out var s) ? s : null;

    public FoldedValue? Values(string name) => name.Length > 0 && _values.TryGetValue(name, out var v) ? v : null;

    /// <summary>Where the shape of an incomplete tensor was lost (a node, or the graph input itself).</summary>
    public ShapeGap? Gap(string name) => name.Length > 0 && _gaps.TryGetValue(name, out var g) ? g : null;

    public void Set(string name, Dim[]? shape)
    {
        if (name.Length == 0) return;
        if (shape is null || shape.Length > MaxRank) _shapes.Remove(name);
        else _shapes[name] = shape;
    }

    public void SetValues(string name, FoldedValue? values)
    {
        if (name.Length == 0) return;
        if (values is null || values.Elements.Length > MaxFoldedElements) _values.Remove(name);
        else _values[name] = values;
    }

    public void SetGap(string name, ShapeGap? gap)
    {
        if (name.Length == 0) return;
        if (gap is null) _gaps.Remove(name);
        else _gaps[name] = gap;
    }

    /// <summary>Rank known and every dimension after the first (the batch) a number.</summary>
    public static bool IsComplete(Dim[]? shape)
    {
        if (shape is null) return false;
        for (var i = 1; i < shape.Length; i++)
            if (!shape[i].IsKnown) return false;
        return true;
    }
}
