namespace CellCompiler.Rendering;

/// <summary>
/// Where one edge goes, in panel coordinates: <see cref="Route"/> is a polyline (two points for a
/// straight edge between neighbours; four for a routed edge: up from its source, across at its
/// track's height, down into its target), drawn with rounded corners of <see cref="CornerRadius"/>.
/// <see cref="Label"/> is the box of its label (background and text).
/// </summary>
public sealed record EdgeGeometry(RenderEdge Edge, IReadOnlyList<Point> Route, double CornerRadius, Box Label, string LabelText, int Track)
{
    public bool IsStraight => Route.Count == 2;
}

/// <summary>A node's place and its caption ("in", "out", "merge 2"), if any, with the caption's box.</summary>
public sealed record NodeGeometry(RenderNode Node, Point Centre, string? Caption, Box? CaptionBox);

/// <summary>
/// The layout of one motif panel. Nodes sit on one horizontal line in index (topological) order,
/// one spacing apart. An edge between neighbours is a straight segment on that line with its label
/// just above it, so the whole line and its arrowhead stay visible. A longer edge rises from the top
/// of its source, runs across at the height of its track and descends into the top of its target.
/// Tracks are assigned like an interval colouring, shorter spans first: two edges share a track only
/// when their spans do not overlap, so edges on one track never share a gap between nodes.
/// Every label sits in the middle of a gap between two nodes: straight labels just above the node
/// line, a routed edge's label on its own track over the middle gap of its span. The spacing is wide
/// enough that a label never reaches the rising and falling lines at the nodes, and tracks are a
/// label's height and more apart, so no label touches another label or another edge's line.
/// </summary>
public sealed class PanelLayout
{
    public const double NodeRadius = 13;
    /// <summary>A merge is drawn as a diamond this much larger than a node's circle.</summary>
    public const double DiamondExtra = 3;
    public const double LabelFontSize = 11;
    public const double LabelHeight = 15;
    public const int MaxLabelChars = 18;
    /// <summary>Horizontal room a label leaves on each side, to the lines at the nodes.</summary>
    public const double LabelClearance = 5;
    /// <summary>Height of a straight edge's label centre above the node line.</summary>
    public const double StraightLabelRise = 13;
    /// <summary>Height of the first track above the node line, and the distance between tracks.</summary>
    public const double FirstTrackRise = 36;
    public const double TrackStep = 25;
    public const double CaptionFontSize = 10.5;
    public const double TitleFontSize = 14;
    public const double InfoFontSize = 11.5;
    public const double InfoLineHeight = 15;
    public const double SidePadding = 30;
    public const double BottomPadding = 16;
    public const double MinSpacing = 76;
    private const double MinRiserOffset = 3;
    private const double MaxRiserOffset = NodeRadius - 3;

    public RenderPanel Panel { get; }
    public double NodeSpacing { get; }
    public double Width { get; }
    public double Height { get; }
    /// <summary>y of the node line, relative to the panel's top.</summary>
    public double Baseline { get; }
    /// <summary>y of the panel title's baseline and of each info line's baseline.</summary>
    public double TitleY { get; } = 22;
    public IReadOnlyList<string> InfoLines { get; }
    public double InfoY => TitleY + InfoLineHeight;
    public IReadOnlyList<NodeGeometry> Nodes { get; }
    public IReadOnlyList<EdgeGeometry> Edges { get; }
    public int TrackCount { get; }

    public PanelLayout(RenderPanel panel, IReadOnlyList<string> infoParts)
    {
        Panel = panel;
        var labels = panel.Edges.ToDictionary(e => e, e => Shorten(e.Edge.Op));
        var captions = panel.Nodes.Select(Caption).ToList();
        var widestLabel = labels.Values.Select(LabelWidth).DefaultIfEmpty(0).Max();
        var widestCaption = captions.Select(c => c is null ? 0 : CaptionWidth(c)).DefaultIfEmpty(0).Max();
        // A label centred in a gap must clear the lines at both nodes, which lie within a node radius of their centres.
        NodeSpacing = Math.Max(MinSpacing, Math.Max(widestLabel + 2 * (NodeRadius + DiamondExtra + LabelClearance), widestCaption + 12));

        var tracks = AssignTracks(panel.Edges);
        TrackCount = tracks.Values.DefaultIfEmpty(0).Max();
        var nodeRowWidth = 2 * (SidePadding + NodeRadius) + (panel.Nodes.Count - 1) * NodeSpacing;

        var titleWidth = TextMetrics.Sans(panel.DisplayName, TitleFontSize, bold: true) + 2 * 14;
        var textWidth = Math.Max(nodeRowWidth, titleWidth) - 2 * 14;
        InfoLines = WrapParts(infoParts, textWidth);
        Width = Math.Max(Math.Max(nodeRowWidth, titleWidth), InfoLines.Select(l => TextMetrics.Sans(l, InfoFontSize) + 2 * 14).DefaultIfEmpty(0).Max());

        var top = InfoY + (InfoLines.Count - 1) * InfoLineHeight + 10;
        var highestLabel = TrackCount > 0 ? TrackRise(TrackCount) : StraightLabelRise;
        Baseline = top + highestLabel + LabelHeight / 2 + 4;
        var firstX = (Width - (panel.Nodes.Count - 1) * NodeSpacing) / 2;
        var centres = Enumerable.Range(0, panel.Nodes.Count).Select(i => new Point(firstX + i * NodeSpacing, Baseline)).ToList();

        var captionY = Baseline + NodeRadius + DiamondExtra + 4;
        Nodes = panel.Nodes.Select(n => new NodeGeometry(n, centres[n.Index], captions[n.Index],
            captions[n.Index] is { } c ? new Box(centres[n.Index].X - CaptionWidth(c) / 2, captionY, CaptionWidth(c), CaptionFontSize + 4) : null)).ToList();
        Height = captionY + (captions.Any(c => c is not null) ? CaptionFontSize + 4 : 0) + BottomPadding;

        var offsets = RiserOffsets(panel.Edges, tracks);
        Edges = panel.Edges.Select(e => Geometry(e, labels[e], tracks.GetValueOrDefault(e), offsets, centres)).ToList();
    }

    /// <summary>Height of track t's line above the node line.</summary>
    public static double TrackRise(int track) => FirstTrackRise + (track - 1) * TrackStep;

    public static double LabelWidth(string text) => TextMetrics.Mono(text, LabelFontSize) + 8;

    public static double CaptionWidth(string caption) => TextMetrics.Sans(caption, CaptionFontSize);

    /// <summary>Long motif names are cut to keep labels apart; the full name stays in the edge's tooltip.</summary>
    public static string Shorten(string op) => op.Length <= MaxLabelChars ? op : op[..(MaxLabelChars - 1)] + "…";

    /// <summary>What is written under a node: "in", "out", "merge 2", or nothing.</summary>
    public static string? Caption(RenderNode node)
    {
        var parts = new List<string>();
        if (node.IsInput) parts.Add("in");
        if (node.IsOutput) parts.Add("out");
        if (node.IsMerge) parts.Add($"merge {node.LiveInputs}");
        return parts.Count == 0 ? null : string.Join(" · ", parts);
    }

    /// <summary>
    /// Tracks of the edges that span more than one gap (straight edges get 0). Shorter spans first, so
    /// nested edges lie under the edges around them; each takes the lowest track whose edges' spans it
    /// does not overlap (sharing an end node is no overlap: one descends left of it, the other rises right).
    /// </summary>
    private static Dictionary<RenderEdge, int> AssignTracks(IReadOnlyList<RenderEdge> edges)
    {
        var tracks = new Dictionary<RenderEdge, int>();
        var taken = new List<List<(int From, int To)>>();
        foreach (var edge in edges.Where(e => e.Edge.To - e.Edge.From > 1)
                     .OrderBy(e => e.Edge.To - e.Edge.From).ThenBy(e => e.Edge.From))
        {
            var (from, to) = (edge.Edge.From, edge.Edge.To);
            var track = taken.FindIndex(spans => spans.All(s => s.To <= from || to <= s.From));
            if (track < 0)
            {
                taken.Add([]);
                track = taken.Count - 1;
            }
            taken[track].Add((from, to));
            tracks[edge] = track + 1;
        }
        return tracks;
    }

    /// <summary>
    /// How far from a node's centre each routed edge leaves (to the right) or enters (from the left):
    /// the edges at one node side are spread over the node's top, the lowest track outermost, so that
    /// a lower edge turns away before a higher edge's line rises or falls past it.
    /// </summary>
    private static Dictionary<(RenderEdge, bool Leaving), double> RiserOffsets(IReadOnlyList<RenderEdge> edges, Dictionary<RenderEdge, int> tracks)
    {
        var offsets = new Dictionary<(RenderEdge, bool), double>();
        var sides = tracks.Keys.Select(e => (Node: e.Edge.From, Leaving: true, Edge: e))
            .Concat(tracks.Keys.Select(e => (Node: e.Edge.To, Leaving: false, Edge: e)))
            .GroupBy(s => (s.Node, s.Leaving));
        foreach (var side in sides)
        {
            var ordered = side.OrderBy(s => tracks[s.Edge]).ToList();
            for (var i = 0; i < ordered.Count; i++)
            {
                var offset = ordered.Count == 1 ? NodeRadius / 2
                    : MaxRiserOffset - (MaxRiserOffset - MinRiserOffset) * i / (ordered.Count - 1);
                offsets[(ordered[i].Edge, side.Key.Leaving)] = offset;
            }
        }
        return offsets;
    }

    /// <summary>How far above a node's centre its outline is, at a horizontal distance from the centre.</summary>
    private static double Outline(RenderNode node, double offset) =>
        node.IsMerge ? NodeRadius + DiamondExtra - offset : Math.Sqrt(NodeRadius * NodeRadius - offset * offset);

    private EdgeGeometry Geometry(RenderEdge edge, string label, int track, Dictionary<(RenderEdge, bool), double> offsets, List<Point> centres)
    {
        var from = centres[edge.Edge.From];
        var to = centres[edge.Edge.To];
        var source = Panel.Nodes[edge.Edge.From];
        var target = Panel.Nodes[edge.Edge.To];
        var labelWidth = LabelWidth(label);
        if (track == 0)
        {
            // Straight, between neighbours: from outline to outline (a diamond reaches further); the arrowhead's tip lands on the outline.
            var start = new Point(from.X + Outline(source, 0), from.Y);
            var end = new Point(to.X - Outline(target, 0) - 1, to.Y);
            var labelBox = Box.Around(new Point((from.X + to.X) / 2, Baseline - StraightLabelRise), labelWidth, LabelHeight);
            return new EdgeGeometry(edge, [start, end], 0, labelBox, label, 0);
        }
        var y = Baseline - TrackRise(track);
        var leave = offsets[(edge, true)];
        var enter = offsets[(edge, false)];
        var s = new Point(from.X + leave, Baseline - Outline(source, leave));
        var t = new Point(to.X - enter, Baseline - Outline(target, enter) - 1);
        var gap = edge.Edge.From + (edge.Edge.To - edge.Edge.From - 1) / 2;
        var labelCentre = new Point(centres[gap].X + NodeSpacing / 2, y);
        var radius = Math.Min(8, (t.X - s.X) / 2);
        return new EdgeGeometry(edge, [s, new Point(s.X, y), new Point(t.X, y), t], radius,
            Box.Around(labelCentre, labelWidth, LabelHeight), label, track);
    }

    /// <summary>Joins parts with " · " into lines no wider than <paramref name="width"/> (a part longer than that gets a line of its own).</summary>
    private static List<string> WrapParts(IReadOnlyList<string> parts, double width)
    {
        var lines = new List<string>();
        var line = "";
        foreach (var part in parts)
        {
            var candidate = line.Length == 0 ? part : line + " · " + part;
            if (line.Length > 0 && TextMetrics.Sans(candidate, InfoFontSize) > width)
            {
                lines.Add(line);
                line = part;
            }
            else line = candidate;
        }
        if (line.Length > 0) lines.Add(line);
        return lines;
    }
}
