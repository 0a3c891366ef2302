namespace CellCompiler.Inspection;

/// <summary>
/// Arithmetic on dimensions that may be symbolic: numbers combine exactly (checked), and a symbol
/// survives only the operations that cannot change it (x + 0, x * 1, x / 1, max(x, x)).
/// Anything else is unknown: we never guess a symbolic expression.
/// </summary>
internal static class DimMath
{
    public static Dim Add(Dim a, Dim b) => (a.Value, b.Value) switch
    {
        ({ } x, { } y) => Dim.Of(checked(x + y)),
        (_, 0) => a,
        (0, _) => b,
        _ => Dim.Unknown,
    };

    public static Dim Sub(Dim a, Dim b) => (a.Value, b.Value) switch
    {
        ({ } x, { } y) => Dim.Of(checked(x - y)),
        (_, 0) => a,
        _ when SameSymbol(a, b) => Dim.Of(0),
        _ => Dim.Unknown,
    };

    public static Dim Mul(Dim a, Dim b) => (a.Value, b.Value) switch
    {
        ({ } x, { } y) => Dim.Of(checked(x * y)),
        (_, 1) => a,
        (1, _) => b,
        (_, 0) or (0, _) => Dim.Of(0),
        _ => Dim.Unknown,
    };

    /// <summary>Integer division truncates toward zero (ONNX Div on integer tensors); on floating-point values it must be exact to stay known.</summary>
    public static Dim Div(Dim a, Dim b, bool integral) => (a.Value, b.Value) switch
    {
        (_, 0) => Dim.Unknown,
        (long.MinValue, -1) => Dim.Unknown,
        ({ } x, { } y) when integral || x % y == 0 => Dim.Of(x / y),
        (_, 1) => a,
        _ when SameSymbol(a, b) => Dim.Of(1),
        _ => Dim.Unknown,
    };

    /// <summary>ONNX Mod: with fmod 0 the result takes the divisor's sign (integer mod), with fmod 1 the dividend's (C fmod).</summary>
    public static Dim Mod(Dim a, Dim b, bool fmod) => (a.Value, b.Value) switch
    {
        (_, 0) => Dim.Unknown,
        (long.MinValue, -1) => Dim.Of(0),
        ({ } x, { } y) => Dim.Of(fmod ? x % y : FlooredMod(x, y)),
        _ => Dim.Unknown,
    };

    private static long FlooredMod(long x, long y)
    {
        var r = x % y;
        return r != 0 && (r < 0) != (y < 0) ? r + y : r;   // r and y have opposite signs here: no overflow
    }

    public static Dim Max(Dim a, Dim b) => (a.Value, b.Value) switch
    {
        ({ } x, { } y) => Dim.Of(Math.Max(x, y)),
        _ when SameSymbol(a, b) => a,
        _ => Dim.Unknown,
    };

    public static Dim Min(Dim a, Dim b) => (a.Value, b.Value) switch
    {
        ({ } x, { } y) => Dim.Of(Math.Min(x, y)),
        _ when SameSymbol(a, b) => a,
        _ => Dim.Unknown,
    };

    public static Dim Neg(Dim a) => a.Value is { } x && x != long.MinValue ? Dim.Of(-x) : Dim.Unknown;

    public static Dim Abs(Dim a) => a.Value is { } x && x != long.MinValue ? Dim.Of(Math.Abs(x)) : Dim.Unknown;

    /// <summary>1 if equal, 0 if not; a symbol equals itself, and nothing else is decided.</summary>
    public static Dim Equal(Dim a, Dim b) => (a.Value, b.Value) switch
    {
        ({ } x, { } y) => Dim.Of(x == y ? 1 : 0),
        _ when SameSymbol(a, b) => Dim.Of(1),
        _ => Dim.Unknown,
    };

    /// <summary>Product of dimensions: a number when all are known; a lone symbol times 1s stays itself (the batch in Flatten).</summary>
    public static Dim Product(IEnumerable<Dim> dims)
    {
        long known = 1;
        Dim? symbolic = null;
        foreach (var d in dims)
        {
            if (d.Value is { } v) known = checked(known * v);
            else if (symbolic is null && !string.IsNullOrEmpty(d.Param)) symbolic = d;
            else return Dim.Unknown;
        }
        if (symbolic is null) return Dim.Of(known);
        return known == 1 ? symbolic.Value : known == 0 ? Dim.Of(0) : Dim.Unknown;
    }

    public static bool SameSymbol(Dim a, Dim b) => !a.IsKnown && !string.IsNullOrEmpty(a.Param) && a.Param == b.Param;

    /// <summary>
    /// The elements a Slice takes along one axis of length <paramref name="size"/> (ONNX Slice: negative
    /// starts and ends count from the end, then both are clamped; a negative step walks backwards).
    /// Returns the first index and the count.
    /// </summary>
    public static (long First, long Count) SliceRange(long size, long start, long end, long step)
    {
        if (step == 0 || size < 0) throw new ArgumentException("a Slice needs a non-zero step and a non-negative size");
        if (start < 0) start += size;
        if (end < 0) end += size;
        if (step > 0)
        {
            start = Math.Clamp(start, 0, size);
            end = Math.Clamp(end, 0, size);
            return (start, end > start ? (end - start - 1) / step + 1 : 0);
        }
        if (size == 0) return (0, 0);
        start = Math.Clamp(start, 0, size - 1);
        end = Math.Clamp(end, -1, size - 1);
        if (start <= end) return (start, 0);
        return (start, step == long.MinValue ? 1 : (start - end - 1) / -step + 1);
    }

    /// <summary>Multidirectional (NumPy) broadcasting of two shapes.</summary>
    public static Dim[] Broadcast(Dim[] a, Dim[] b)
    {
        var rank = Math.Max(a.Length, b.Length);
        var result = new Dim[rank];
        for (var i = 1; i <= rank; i++)
        {
            Dim? da = i <= a.Length ? a[^i] : null, db = i <= b.Length ? b[^i] : null;
            result[^i] = (da, db) switch
            {
                (null, { } y) => y,
                ({ } x, null) => x,
                ({ } x, { } y) when x.Value == 1 => y,
                ({ } x, { } y) when y.Value == 1 => x,
                ({ } x, _) when x.IsKnown => x,
                (_, { } y) when y.IsKnown => y,
                ({ } x, { } y) when SameSymbol(x, y) => x,
                _ => Dim.Unknown,
            };
        }
        return result;
    }
}
