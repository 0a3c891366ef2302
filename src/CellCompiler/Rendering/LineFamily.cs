using CellCompiler.Vocabulary;

namespace CellCompiler.Rendering;

/// <summary>
/// What a drawn edge applies, for its look: the five kind families of declared primitives
/// (<see cref="KindFamily"/>), identity, and a motif of the level below.
/// </summary>
public enum LineFamily { Convolution, Depthwise, Factorized, Bottleneck, Pooling, Identity, Motif }

/// <summary>
/// How one line family is drawn, in SVG and in DOT. Every family has its own colour and, besides
/// colour, its own line pattern (solid, dashes, dots of two sizes, two rails, a heavy line), so
/// that families stay apart for readers who do not tell the colours apart. Graphviz offers fewer
/// patterns than SVG (solid, dashed, dotted, pen width, parallel colours), so the SVG patterns are
/// chosen from what DOT can also show: both formats draw a family the same way.
/// </summary>
/// <param name="Css">The class name in SVG (`edge conv`, `cellc-conv-line`).</param>
/// <param name="Width">Stroke width in SVG user units (of each rail, for <see cref="Rails"/>).</param>
/// <param name="Dash">SVG stroke-dasharray, or null for a continuous line.</param>
/// <param name="RoundDots">Round line caps: with a near-zero dash, dots instead of dashes.</param>
/// <param name="Rails">Two parallel lines (SVG: a wide stroke with its middle knocked out; DOT: two colours in parallel).</param>
/// <param name="DotStyle">Graphviz `style` of the edge.</param>
/// <param name="DotPenWidth">Graphviz `penwidth`.</param>
public sealed record LineStyle(
    LineFamily Family, string Name, string Css, double Width, string? Dash, bool RoundDots, bool Rails,
    string DotStyle, double DotPenWidth)
{
    /// <summary>Pattern as a reader sees it, for the legend's text and the tests: e.g. "dashed", "two rails".</summary>
    public string Pattern => Rails ? "two rails" : Dash is null ? (Width >= 3 ? "heavy solid" : Width >= 2.4 ? "bold solid" : "solid")
        : RoundDots ? (Width >= 2.5 ? "large dots" : "small dots") : "dashed";
}

/// <summary>The families and their styles: the one table that pictures (SVG and DOT) and their legends read.</summary>
public static class LineFamilies
{
    public static readonly IReadOnlyList<LineFamily> All = Enum.GetValues<LineFamily>();

    /// <summary>The family a kind is drawn in; an unknown kind family is an error, never a default look.</summary>
    public static LineFamily Of(KindFamily family) => family switch
    {
        KindFamily.Convolution => LineFamily.Convolution,
        KindFamily.Depthwise => LineFamily.Depthwise,
        KindFamily.Factorized => LineFamily.Factorized,
        KindFamily.Bottleneck => LineFamily.Bottleneck,
        KindFamily.Pooling => LineFamily.Pooling,
        _ => throw new ArgumentOutOfRangeException(nameof(family), family, "no line family for this kind family"),
    };

    public static LineStyle Style(LineFamily family) => family switch
    {
        LineFamily.Convolution => new(family, "convolution", "conv", 1.8, null, false, false, "solid", 1.6),
        LineFamily.Depthwise => new(family, "depthwise / separable", "depthwise", 1.8, "8 4", false, false, "dashed", 1.6),
        LineFamily.Factorized => new(family, "factorized 1xk, kx1", "factorized", 1.3, null, false, true, "solid", 1.3),
        LineFamily.Bottleneck => new(family, "inverted bottleneck", "bottleneck", 3.6, null, false, false, "solid", 3.4),
        LineFamily.Pooling => new(family, "pooling", "pool", 3.0, "0.1 5.5", true, false, "dotted", 2.6),
        LineFamily.Identity => new(family, "identity", "identity", 1.5, "0.1 3.4", true, false, "dotted", 1.0),
        LineFamily.Motif => new(family, "motif of the level below", "motif", 2.6, null, false, false, "solid", 2.6),
        _ => throw new ArgumentOutOfRangeException(nameof(family), family, "unknown line family"),
    };

    /// <summary>Families that can meet in one panel: level 0 (primitives and identity) or a higher level (motifs and identity).</summary>
    public static readonly IReadOnlyList<IReadOnlyList<LineFamily>> SharePanels =
    [
        [LineFamily.Convolution, LineFamily.Depthwise, LineFamily.Factorized, LineFamily.Bottleneck, LineFamily.Pooling, LineFamily.Identity],
        [LineFamily.Motif, LineFamily.Identity],
    ];
}
