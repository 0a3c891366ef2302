using System.Globalization;
using System.Xml.Linq;

namespace CellCompiler.Rendering;

/// <summary>
/// Writes a <see cref="RenderModel"/> as one self-contained SVG document: the embedded stylesheet of
/// <see cref="SvgStyle"/> (light and dark palettes), its own backdrop so it reads on any page, no
/// external references. The cell's panel comes first, then one row of panels per level below, then
/// the legend (<see cref="SvgLegend"/>) and the notes.
/// </summary>
public static class SvgWriter
{
    public static readonly XNamespace Ns = "http://www.w3.org/2000/svg";
    private const double Margin = 16;
    private const double Gap = 14;
    private const double MinRowWidth = 960;
    private const double NoteFontSize = 12;

    public static string Write(RenderModel model)
    {
        var layouts = model.Panels.Select(p => new PanelLayout(p, PanelInfo(p))).ToList();
        var rowWidth = Math.Max(MinRowWidth, layouts.Select(l => l.Width).DefaultIfEmpty(0).Max());

        var body = new List<XElement>();
        var y = Margin;
        body.Add(Text("heading", Margin + 4, y + 16, model.GenotypeName));
        body.Add(Text("subheading", Margin + 4, y + 34, Subheading(model)));
        y += 48;
        var width = Math.Max(rowWidth, Math.Max(TextMetrics.Sans(model.GenotypeName, 17, bold: true),
            TextMetrics.Sans(Subheading(model), 12.5)) + 8);

        // Rows: the cell alone, then each level's used motifs packed left to right.
        foreach (var level in layouts.GroupBy(l => l.Panel.Level))
        {
            var row = new List<PanelLayout>();
            double rowUsed = 0;
            foreach (var layout in level)
            {
                if (row.Count > 0 && rowUsed + Gap + layout.Width > rowWidth)
                {
                    y = PlaceRow(row, y, body, ref width);
                    row.Clear();
                    rowUsed = 0;
                }
                rowUsed += (row.Count > 0 ? Gap : 0) + layout.Width;
                row.Add(layout);
            }
            y = PlaceRow(row, y, body, ref width);
        }

        var textWidth = width - 8;
        y += 4;
        var (legend, legendHeight) = SvgLegend.Build(model, Margin + 4, y, textWidth);
        body.Add(legend);
        y += legendHeight + 6;
        foreach (var note in Notes(model))
            foreach (var line in Wrap(note, textWidth, NoteFontSize))
            {
                body.Add(Text("note", Margin + 4, y + 12, line));
                y += 18;
            }

        var totalWidth = width + 2 * Margin;
        var totalHeight = y + Margin;
        var svg = new XElement(Ns + "svg",
            new XAttribute("class", "cellc-render"),
            new XAttribute("width", Num(totalWidth)),
            new XAttribute("height", Num(totalHeight)),
            new XAttribute("viewBox", $"0 0 {Num(totalWidth)} {Num(totalHeight)}"),
            new XAttribute("role", "img"),
            new XAttribute("aria-label", $"Cell picture of {model.GenotypeName}"),
            new XElement(Ns + "title", $"{model.GenotypeName}: {Subheading(model)}"),
            new XElement(Ns + "style", SvgStyle.Css),
            Markers(),
            new XElement(Ns + "rect", new XAttribute("class", "backdrop"), new XAttribute("width", Num(totalWidth)),
                new XAttribute("height", Num(totalHeight)), new XAttribute("rx", "10")),
            body);
        return new XDocument(svg).ToString() + "\n";
    }

    private static string Subheading(RenderModel model)
    {
        var motifs = model.Panels.Count - 1;
        var drawn = motifs == 0 ? "the cell" : $"the cell and {motifs} used motif{(motifs == 1 ? "" : "s")}";
        var levels = model.LevelCount == 1 ? "flat cell (1 level)" : $"{model.LevelCount} levels";
        var dead = model.CellIsLive ? "" : " · DEAD CELL: the output does not depend on the input";
        return $"{levels} · {drawn}{dead}";
    }

    private static double PlaceRow(List<PanelLayout> row, double y, List<XElement> body, ref double width)
    {
        if (row.Count == 0) return y;
        var height = row.Max(l => l.Height);
        var x = Margin;
        foreach (var layout in row)
        {
            body.Add(Panel(layout, x, y, height));
            x += layout.Width + Gap;
        }
        width = Math.Max(width, x - Gap - Margin);
        return y + height + Gap;
    }

    private static XElement Panel(PanelLayout layout, double x, double y, double height)
    {
        var panel = layout.Panel;
        var group = new XElement(Ns + "g",
            new XAttribute("class", panel.IsCell ? "motif cell" : "motif"),
            new XAttribute("data-motif", panel.Motif.Name),
            new XAttribute("data-level", panel.Level.ToString(CultureInfo.InvariantCulture)),
            new XAttribute("transform", $"translate({Num(x)},{Num(y)})"));
        group.Add(new XElement(Ns + "rect", new XAttribute("class", panel.IsCell ? "panel cell" : "panel"),
            new XAttribute("width", Num(layout.Width)), new XAttribute("height", Num(height)), new XAttribute("rx", "8")));
        group.Add(Text("panel-title", 14, layout.TitleY, panel.DisplayName));
        for (var i = 0; i < layout.InfoLines.Count; i++)
            group.Add(Text("panel-info", 14, layout.InfoY + i * PanelLayout.InfoLineHeight, layout.InfoLines[i]));

        // Lines first (dead ones underneath), then labels on their backgrounds, then nodes on top.
        var lines = new XElement(Ns + "g", new XAttribute("class", "edges"));
        var labels = new XElement(Ns + "g", new XAttribute("class", "edge-labels"));
        foreach (var geometry in layout.Edges.OrderBy(g => g.Edge.IsDead ? 0 : 1))
        {
            var edge = geometry.Edge;
            var style = LineFamilies.Style(edge.Family);
            foreach (var line in EdgeLines(style, edge.IsDead, geometry.Route, geometry.CornerRadius, EdgeTitle(edge)))
                lines.Add(line);
            labels.Add(LabelBackground(geometry.Label));
            labels.Add(new XElement(Ns + "text",
                new XAttribute("class", edge.IsDead ? $"edge-label {style.Css} dead" : $"edge-label {style.Css}"),
                new XAttribute("data-family", style.Css),
                new XAttribute("x", Num(geometry.Label.Centre.X)),
                new XAttribute("y", Num(geometry.Label.Centre.Y)),
                new XAttribute("dy", "0.35em"),
                geometry.LabelText));
        }
        group.Add(lines, labels);

        var nodes = new XElement(Ns + "g", new XAttribute("class", "nodes"));
        foreach (var node in layout.Nodes)
            nodes.Add(Node(node));
        group.Add(nodes);
        return group;
    }

    /// <summary>
    /// The SVG elements of one edge's line: one path, or for two rails the wide path and its
    /// knocked-out middle, which stops short of the arrowhead so the arrowhead stays whole.
    /// </summary>
    public static IEnumerable<XElement> EdgeLines(LineStyle style, bool dead, IReadOnlyList<Point> route, double cornerRadius, string? title)
    {
        var path = new XElement(Ns + "path",
            new XAttribute("class", dead ? $"edge {style.Css} dead" : $"edge {style.Css}"),
            new XAttribute("d", PathData(route, cornerRadius)),
            new XAttribute("marker-end", $"url(#cellc-arrow-{(dead ? "dead" : style.Css)})"));
        if (title is not null) path.Add(new XElement(Ns + "title", title));
        yield return path;
        if (style.Rails)
        {
            var (last, before) = (route[^1], route[^2]);
            var length = Math.Sqrt((last.X - before.X) * (last.X - before.X) + (last.Y - before.Y) * (last.Y - before.Y));
            var cut = Math.Min(ArrowLength, length / 2) / Math.Max(length, 1e-9);
            var shortened = route.Take(route.Count - 1).Append(new Point(last.X - (last.X - before.X) * cut, last.Y - (last.Y - before.Y) * cut)).ToList();
            yield return new XElement(Ns + "path", new XAttribute("class", $"rail-gap {style.Css}"), new XAttribute("d", PathData(shortened, cornerRadius)));
        }
    }

    /// <summary>How far an arrowhead reaches back along its line.</summary>
    private const double ArrowLength = 8;

    public static XElement LabelBackground(Box box) =>
        new(Ns + "rect", new XAttribute("class", "label-bg"),
            new XAttribute("x", Num(box.X)), new XAttribute("y", Num(box.Y)),
            new XAttribute("width", Num(box.Width)), new XAttribute("height", Num(box.Height)), new XAttribute("rx", "4"));

    /// <summary>A route as path data: two points are one segment; four are up, across and down, joined by rounded corners.</summary>
    private static string PathData(IReadOnlyList<Point> p, double r)
    {
        if (p.Count == 2) return $"M{Pt(p[0])} L{Pt(p[1])}";
        var (s, a, b, t) = (p[0], p[1], p[2], p[3]);
        return $"M{Pt(s)} L{Pt(a with { Y = a.Y + r })} Q{Pt(a)} {Pt(a with { X = a.X + r })} " +
               $"L{Pt(b with { X = b.X - r })} Q{Pt(b)} {Pt(b with { Y = b.Y + r })} L{Pt(t)}";
    }

    private static List<string> PanelInfo(RenderPanel panel)
    {
        var parts = new List<string>
        {
            $"level {panel.Level}",
            $"{panel.Nodes.Count} nodes",
            $"{panel.LiveEdgeCount} live edge{(panel.LiveEdgeCount == 1 ? "" : "s")}",
        };
        var dead = panel.Edges.Count - panel.LiveEdgeCount;
        if (dead > 0) parts.Add($"{dead} dead");
        if (panel.UsedBy.Count > 0)
            parts.Add("used by " + string.Join(", ", panel.UsedBy.Select(u => u.Count == 1 ? u.User : $"{u.User} ×{u.Count}")));
        if (!panel.OutputIsLive) parts.Add("output dead");
        return parts;
    }

    private static string EdgeTitle(RenderEdge edge)
    {
        var e = edge.Edge;
        var text = $"edge {e.Index}: {e.From} → {e.To}, {e.Op} ({LineFamilies.Style(edge.Family).Name})";
        return edge.IsDead ? text + " (dead: removed when lowering)" : text;
    }

    private static XElement Node(NodeGeometry geometry)
    {
        var node = geometry.Node;
        var at = geometry.Centre;
        var classes = new List<string> { "node" };
        if (node.IsInput || node.IsOutput) classes.Add("io");
        if (node.IsMerge) classes.Add("merge");
        if (node.IsDead) classes.Add("dead");
        var group = new XElement(Ns + "g", new XAttribute("class", string.Join(' ', classes)),
            new XAttribute("data-node", node.Index.ToString(CultureInfo.InvariantCulture)));
        group.Add(new XElement(Ns + "title", NodeTitle(node)));
        group.Add(node.IsMerge ? Diamond(at, PanelLayout.NodeRadius + PanelLayout.DiamondExtra) : Circle(at, PanelLayout.NodeRadius));
        group.Add(new XElement(Ns + "text", new XAttribute("class", "node-index"),
            new XAttribute("x", Num(at.X)), new XAttribute("y", Num(at.Y)), new XAttribute("dy", "0.35em"),
            node.Index.ToString(CultureInfo.InvariantCulture)));
        if (geometry is { Caption: { } caption, CaptionBox: { } box })
            group.Add(new XElement(Ns + "text", new XAttribute("class", "node-caption"),
                new XAttribute("x", Num(at.X)), new XAttribute("y", Num(box.Y + PanelLayout.CaptionFontSize)), caption));
        return group;
    }

    public static XElement Circle(Point at, double r) =>
        new(Ns + "circle", new XAttribute("class", "shape"),
            new XAttribute("cx", Num(at.X)), new XAttribute("cy", Num(at.Y)), new XAttribute("r", Num(r)));

    /// <summary>A diamond: merges stand out from the plain circles.</summary>
    public static XElement Diamond(Point at, double r) =>
        new(Ns + "path", new XAttribute("class", "shape"),
            new XAttribute("d", $"M{Num(at.X)},{Num(at.Y - r)} L{Num(at.X + r)},{Num(at.Y)} L{Num(at.X)},{Num(at.Y + r)} L{Num(at.X - r)},{Num(at.Y)} Z"));

    private static string NodeTitle(RenderNode node)
    {
        var role = node.IsInput ? "input node" : node.IsOutput ? "output node" : "node";
        var text = $"{role} {node.Index}";
        if (node.IsMerge) text += $": merges {node.LiveInputs} live inputs";
        if (node.IsDead) text += " (dead)";
        return text;
    }

    private static IEnumerable<string> Notes(RenderModel model)
    {
        var unused = model.Omitted.Where(m => !m.IsDead).ToList();
        var dead = model.Omitted.Where(m => m.IsDead).ToList();
        if (unused.Count > 0)
            yield return "Not drawn, unused (no live edge reaches them): " + Names(unused);
        if (dead.Count > 0)
            yield return "Not drawn, dead (their output does not depend on their input, so they act as none): " + Names(dead);
        if (unused.Count == 0 && dead.Count == 0 && model.Panels.Count > 1)
            yield return "Every motif of the genotype is used.";
    }

    private static string Names(IEnumerable<OmittedMotif> motifs) =>
        string.Join(", ", motifs.Select(m => $"{m.Name} (level {m.Level})"));

    /// <summary>Lines of at most <paramref name="width"/> (by the sans bound), continuation lines indented.</summary>
    public static IEnumerable<string> Wrap(string text, double width, double fontSize)
    {
        var line = "";
        foreach (var word in text.Split(' '))
        {
            var candidate = line.Length == 0 ? word : line + " " + word;
            if (line.Length > 0 && TextMetrics.Sans(candidate, fontSize) > width)
            {
                yield return line;
                line = "    " + word;
            }
            else line = candidate;
        }
        if (line.Length > 0) yield return line;
    }

    private static XElement Markers()
    {
        var defs = new XElement(Ns + "defs");
        foreach (var css in LineFamilies.All.Select(f => LineFamilies.Style(f).Css).Append("dead"))
            defs.Add(new XElement(Ns + "marker",
                new XAttribute("id", $"cellc-arrow-{css}"),
                new XAttribute("class", $"arrow {css}"),
                new XAttribute("viewBox", "0 0 10 10"),
                new XAttribute("refX", "9"), new XAttribute("refY", "5"),
                new XAttribute("markerWidth", "8"), new XAttribute("markerHeight", "8"),
                new XAttribute("markerUnits", "userSpaceOnUse"),
                new XAttribute("orient", "auto"),
                new XElement(Ns + "path", new XAttribute("d", "M0,1 L10,5 L0,9 Z"))));
        return defs;
    }

    public static XElement Text(string cssClass, double x, double y, string content) =>
        new(Ns + "text", new XAttribute("class", cssClass), new XAttribute("x", Num(x)), new XAttribute("y", Num(y)), content);

    private static string Pt(Point p) => $"{Num(p.X)},{Num(p.Y)}";

    public static string Num(double value) => Math.Round(value, 1).ToString("0.#", CultureInfo.InvariantCulture);
}
