namespace CellCompiler.Rendering;

/// <summary>A point in SVG user units.</summary>
public readonly record struct Point(double X, double Y);

/// <summary>Where one edge goes: a straight line (adjacent nodes) or a cubic arc above the node line, with its label's centre.</summary>
public sealed record EdgeGeometry(RenderEdge Edge, Point Start, Point Control1, Point Control2, Point End, Point Label, string LabelText)
{
    public bool IsStraight => Edge.Edge.To - Edge.Edge.From == 1;
}

/// <summary>
/// The layout of one motif panel. Nodes sit on one horizontal line in index (topological) order;
/// an edge between neighbours is a straight segment on that line, a longer edge an arc above it
/// whose height grows with its span. Each label sits on its edge's apex: labels of one span are a
/// whole node spacing apart, labels of different spans a whole height step apart, so no two
/// labels overlap while the spacing exceeds the widest label.
/// </summary>
public sealed class PanelLayout
{
    public const double NodeRadius = 13;
    public const double LabelFontSize = 11;
    /// <summary>Advance of one monospace label character at <see cref="LabelFontSize"/> (0.6 em, a safe upper bound).</summary>
    public const double LabelCharWidth = LabelFontSize * 0.62;
    public const double LabelHeight = 14;
    public const int MaxLabelChars = 18;
    public const double HeightStep = 24;
    public const double TitleHeight = 40;
    public const double SidePadding = 34;
    public const double BottomPadding = 34;

    public RenderPanel Panel { get; }
    public double NodeSpacing { get; }
    public double Width { get; }
    public double Height { get; }
    /// <summary>y of the node line, relative to the panel's top.</summary>
    public double Baseline { get; }
    public IReadOnlyList<Point> Nodes { get; }
    public IReadOnlyList<EdgeGeometry> Edges { get; }

    public PanelLayout(RenderPanel panel)
    {
        Panel = panel;
        var labels = panel.Edges.ToDictionary(e => e, e => Shorten(e.Edge.Op));
        var widest = labels.Values.Select(LabelWidth).DefaultIfEmpty(0).Max();
        var widestNeighbour = labels.Where(p => p.Key.Edge.To - p.Key.Edge.From == 1)
            .Select(p => LabelWidth(p.Value)).DefaultIfEmpty(0).Max();
        // Same-span labels are one spacing apart; a neighbour's label must fit between two circles.
        NodeSpacing = Math.Max(72, Math.Max(widest + 14, widestNeighbour + 2 * NodeRadius + 12));

        var maxSpan = panel.Edges.Select(e => e.Edge.To - e.Edge.From).DefaultIfEmpty(1).Max();
        Baseline = TitleHeight + ArcHeight(maxSpan) + LabelHeight / 2 + 12;
        var count = panel.Nodes.Count;
        Nodes = Enumerable.Range(0, count).Select(i => new Point(SidePadding + NodeRadius + i * NodeSpacing, Baseline)).ToList();
        Width = 2 * (SidePadding + NodeRadius) + (count - 1) * NodeSpacing;
        Height = Baseline + NodeRadius + BottomPadding;
        Edges = panel.Edges.Select(e => Geometry(e, labels[e])).ToList();
    }

    /// <summary>Height of an arc's apex above the node line: 0 for neighbours, then one step per extra node spanned.</summary>
    public static double ArcHeight(int span) => span <= 1 ? 0 : 22 + HeightStep * (span - 1);

    public static double LabelWidth(string text) => text.Length * LabelCharWidth + 8;

    /// <summary>Long motif names are cut to keep labels apart; the full name stays in the edge's tooltip.</summary>
    public static string Shorten(string op) => op.Length <= MaxLabelChars ? op : op[..(MaxLabelChars - 1)] + "…";

    private EdgeGeometry Geometry(RenderEdge edge, string label)
    {
        var from = Nodes[edge.Edge.From];
        var to = Nodes[edge.Edge.To];
        var span = edge.Edge.To - edge.Edge.From;
        if (span == 1)
        {
            var start = new Point(from.X + NodeRadius, from.Y);
            var end = new Point(to.X - NodeRadius - 1, to.Y);
            return new EdgeGeometry(edge, start, start, end, end, new Point((from.X + to.X) / 2, from.Y), label);
        }
        // Leave and enter through the top of the circles, a little towards each other.
        var dx = NodeRadius * 0.5;
        var dy = NodeRadius * 0.866;
        var s = new Point(from.X + dx, from.Y - dy);
        var t = new Point(to.X - dx, to.Y - dy);
        var apex = Baseline - ArcHeight(span);
        // A cubic with both controls at height c above the ends peaks at 3/4 c.
        var c = (s.Y - apex) / 0.75;
        return new EdgeGeometry(edge, s, new Point(s.X, s.Y - c), new Point(t.X, s.Y - c), t,
            new Point((from.X + to.X) / 2, apex), label);
    }
}
