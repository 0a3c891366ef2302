using System.Globalization;
using System.Xml.Linq;

namespace CellCompiler.Rendering;

/// <summary>
/// Writes a <see cref="RenderModel"/> as one self-contained SVG document: embedded CSS with a light
/// and a dark palette (chosen by prefers-color-scheme), its own backdrop so it reads on any page,
/// no external references. The cell's panel comes first, then one row of panels per level below.
/// </summary>
public static class SvgWriter
{
    private static readonly XNamespace Ns = "http://www.w3.org/2000/svg";
    private const double Margin = 16;
    private const double Gap = 14;
    private const double MinRowWidth = 960;
    private const double NoteFontSize = 12;
    private const double NoteCharWidth = NoteFontSize * 0.56;

    private static readonly string[] Kinds = ["conv", "pool", "identity", "motif"];

    public static string Write(RenderModel model)
    {
        var layouts = model.Panels.Select(p => new PanelLayout(p)).ToList();
        var rowWidth = Math.Max(MinRowWidth, layouts.Select(l => l.Width).DefaultIfEmpty(0).Max());

        var body = new List<XElement>();
        var y = Margin;
        var heading = Text("heading", Margin + 4, y + 16, model.GenotypeName);
        var subheading = Text("subheading", Margin + 4, y + 34, Subheading(model));
        body.Add(heading);
        body.Add(subheading);
        y += 48;

        // Rows: the cell alone, then each level's used motifs packed left to right.
        double width = 0;
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

        var textWidth = Math.Max(width, rowWidth) - 8;
        y += 4;
        body.Add(Legend(Margin + 4, y));
        y += 44;
        foreach (var note in Notes(model))
            foreach (var line in Wrap(note, (int)(textWidth / NoteCharWidth)))
            {
                body.Add(Text("note", Margin + 4, y + 12, line));
                y += 18;
            }
        width = Math.Max(width, rowWidth);

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
            new XElement(Ns + "style", Css),
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
        group.Add(Text("panel-title", 14, 22, panel.DisplayName));
        group.Add(Text("panel-info", 14, 36, PanelInfo(panel)));

        // Lines first, then labels (their halos cut the lines they sit on), then nodes on top.
        var lines = new XElement(Ns + "g", new XAttribute("class", "edges"));
        var labels = new XElement(Ns + "g", new XAttribute("class", "edge-labels"));
        foreach (var geometry in layout.Edges.OrderBy(g => g.Edge.IsDead ? 0 : 1))
        {
            var edge = geometry.Edge;
            var kind = KindName(edge.Kind);
            var d = geometry.IsStraight
                ? $"M{Pt(geometry.Start)} L{Pt(geometry.End)}"
                : $"M{Pt(geometry.Start)} C{Pt(geometry.Control1)} {Pt(geometry.Control2)} {Pt(geometry.End)}";
            lines.Add(new XElement(Ns + "path",
                new XAttribute("class", edge.IsDead ? $"edge {kind} dead" : $"edge {kind}"),
                new XAttribute("d", d),
                new XAttribute("marker-end", $"url(#cellc-arrow-{(edge.IsDead ? "dead" : kind)})"),
                new XElement(Ns + "title", EdgeTitle(edge))));
            var labelWidth = PanelLayout.LabelWidth(geometry.LabelText);
            labels.Add(new XElement(Ns + "rect", new XAttribute("class", "label-bg"),
                new XAttribute("x", Num(geometry.Label.X - labelWidth / 2)),
                new XAttribute("y", Num(geometry.Label.Y - PanelLayout.LabelHeight / 2)),
                new XAttribute("width", Num(labelWidth)), new XAttribute("height", Num(PanelLayout.LabelHeight)),
                new XAttribute("rx", "4")));
            labels.Add(new XElement(Ns + "text",
                new XAttribute("class", edge.IsDead ? "edge-label dead" : "edge-label"),
                new XAttribute("data-kind", kind),
                new XAttribute("x", Num(geometry.Label.X)),
                new XAttribute("y", Num(geometry.Label.Y)),
                new XAttribute("dy", "0.35em"),
                geometry.LabelText));
        }
        group.Add(lines, labels);

        var nodes = new XElement(Ns + "g", new XAttribute("class", "nodes"));
        foreach (var node in panel.Nodes)
            nodes.Add(Node(node, layout.Nodes[node.Index]));
        group.Add(nodes);
        return group;
    }

    private static string PanelInfo(RenderPanel panel)
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
        return string.Join(" · ", parts);
    }

    private static string EdgeTitle(RenderEdge edge)
    {
        var e = edge.Edge;
        var text = $"edge {e.Index}: {e.From} → {e.To}, {e.Op}";
        return edge.IsDead ? text + " (dead: removed when lowering)" : text;
    }

    private static XElement Node(RenderNode node, Point at)
    {
        var classes = new List<string> { "node" };
        if (node.IsInput || node.IsOutput) classes.Add("io");
        if (node.IsMerge) classes.Add("merge");
        if (node.IsDead) classes.Add("dead");
        var group = new XElement(Ns + "g", new XAttribute("class", string.Join(' ', classes)),
            new XAttribute("data-node", node.Index.ToString(CultureInfo.InvariantCulture)));
        group.Add(new XElement(Ns + "title", NodeTitle(node)));
        if (node.IsMerge)
        {
            // A diamond: merges stand out from the plain circles.
            var r = PanelLayout.NodeRadius + 3;
            group.Add(new XElement(Ns + "path", new XAttribute("class", "shape"),
                new XAttribute("d", $"M{Num(at.X)},{Num(at.Y - r)} L{Num(at.X + r)},{Num(at.Y)} L{Num(at.X)},{Num(at.Y + r)} L{Num(at.X - r)},{Num(at.Y)} Z")));
        }
        else
        {
            group.Add(new XElement(Ns + "circle", new XAttribute("class", "shape"),
                new XAttribute("cx", Num(at.X)), new XAttribute("cy", Num(at.Y)), new XAttribute("r", Num(PanelLayout.NodeRadius))));
        }
        group.Add(new XElement(Ns + "text", new XAttribute("class", "node-index"),
            new XAttribute("x", Num(at.X)), new XAttribute("y", Num(at.Y)), new XAttribute("dy", "0.35em"),
            node.Index.ToString(CultureInfo.InvariantCulture)));

        var caption = new List<string>();
        if (node.IsInput) caption.Add("in");
        if (node.IsOutput) caption.Add("out");
        if (node.IsMerge) caption.Add($"merge {node.LiveInputs}");
        if (caption.Count > 0)
            group.Add(new XElement(Ns + "text", new XAttribute("class", "node-caption"),
                new XAttribute("x", Num(at.X)), new XAttribute("y", Num(at.Y + PanelLayout.NodeRadius + 16)),
                string.Join(" · ", caption)));
        return group;
    }

    private static string NodeTitle(RenderNode node)
    {
        var role = node.IsInput ? "input node" : node.IsOutput ? "output node" : "node";
        var text = $"{role} {node.Index}";
        if (node.IsMerge) text += $": merges {node.LiveInputs} live inputs";
        if (node.IsDead) text += " (dead)";
        return text;
    }

    /// <summary>A key to the picture: one sample per edge colour, the merge shape, and the dead style.</summary>
    private static XElement Legend(double x, double y)
    {
        var legend = new XElement(Ns + "g", new XAttribute("class", "legend"),
            new XAttribute("transform", $"translate({Num(x)},{Num(y)})"));
        legend.Add(Text("legend", 0, 12,
            "Read left to right: nodes in topological order, each edge labelled with its op; none edges are not drawn."));
        var at = 0.0;
        foreach (var (kind, text) in new[]
                 {
                     ("conv", "convolution"), ("pool", "pooling"), ("identity", "identity"),
                     ("motif", "motif of the level below"), ("dead", "dead (removed when lowering)"),
                 })
        {
            var cssClass = kind == "dead" ? "edge conv dead" : $"edge {kind}";
            legend.Add(new XElement(Ns + "path", new XAttribute("class", cssClass),
                new XAttribute("d", $"M{Num(at)},30 L{Num(at + 26)},30"),
                new XAttribute("marker-end", $"url(#cellc-arrow-{kind})")));
            legend.Add(Text("legend", at + 32, 34, text));
            at += 32 + text.Length * 6.6 + 22;
        }
        var r = 8.0;
        legend.Add(new XElement(Ns + "g", new XAttribute("class", "node merge key"),
            new XElement(Ns + "path", new XAttribute("class", "shape"),
                new XAttribute("d", $"M{Num(at + r)},{Num(30 - r)} L{Num(at + 2 * r)},30 L{Num(at + r)},{Num(30 + r)} L{Num(at)},30 Z"))));
        legend.Add(Text("legend", at + 2 * r + 6, 34, "merge (≥2 live inputs)"));
        return legend;
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

    private static IEnumerable<string> Wrap(string text, int maxChars)
    {
        maxChars = Math.Max(40, maxChars);
        var line = "";
        foreach (var word in text.Split(' '))
        {
            if (line.Length > 0 && line.Length + 1 + word.Length > maxChars)
            {
                yield return line;
                line = "    " + word;
            }
            else
            {
                line = line.Length == 0 ? word : line + " " + word;
            }
        }
        if (line.Length > 0) yield return line;
    }

    private static XElement Markers()
    {
        var defs = new XElement(Ns + "defs");
        foreach (var kind in Kinds.Append("dead"))
            defs.Add(new XElement(Ns + "marker",
                new XAttribute("id", $"cellc-arrow-{kind}"),
                new XAttribute("class", $"arrow {kind}"),
                new XAttribute("viewBox", "0 0 10 10"),
                new XAttribute("refX", "9"), new XAttribute("refY", "5"),
                new XAttribute("markerWidth", "7"), new XAttribute("markerHeight", "7"),
                new XAttribute("markerUnits", "userSpaceOnUse"),
                new XAttribute("orient", "auto"),
                new XElement(Ns + "path", new XAttribute("d", "M0,1 L10,5 L0,9 Z"))));
        return defs;
    }

    private static string KindName(EdgeKind kind) => kind switch
    {
        EdgeKind.Convolution => "conv",
        EdgeKind.Pooling => "pool",
        EdgeKind.Identity => "identity",
        _ => "motif",
    };

    private static XElement Text(string cssClass, double x, double y, string content) =>
        new(Ns + "text", new XAttribute("class", cssClass), new XAttribute("x", Num(x)), new XAttribute("y", Num(y)), content);

    private static string Pt(Point p) => $"{Num(p.X)},{Num(p.Y)}";

    private static string Num(double value) => Math.Round(value, 1).ToString("0.#", CultureInfo.InvariantCulture);

    private const string Css = """

        .cellc-render { font-family: "Segoe UI", "Helvetica Neue", Arial, "DejaVu Sans", sans-serif; }
        .cellc-render .backdrop { fill: #fbfaf7; }
        .cellc-render text { fill: #1f2328; }
        .cellc-render .heading { font-size: 17px; font-weight: 700; }
        .cellc-render .subheading { font-size: 12.5px; fill: #57606a; }
        .cellc-render .panel { fill: #ffffff; stroke: #d5d9de; stroke-width: 1; }
        .cellc-render .panel.cell { stroke: #8c959f; stroke-width: 1.5; }
        .cellc-render .panel-title { font-size: 14px; font-weight: 700; }
        .cellc-render .panel-info { font-size: 11.5px; fill: #57606a; }
        .cellc-render .edge { fill: none; stroke-width: 1.6; }
        .cellc-render .edge.conv { stroke: #1f6feb; }
        .cellc-render .edge.pool { stroke: #c4511a; }
        .cellc-render .edge.identity { stroke: #6e7781; stroke-dasharray: 1 3; stroke-linecap: round; stroke-width: 2; }
        .cellc-render .edge.motif { stroke: #1a7f37; stroke-width: 2.2; }
        .cellc-render .edge.dead { stroke: #8c959f; stroke-dasharray: 5 4; opacity: 0.55; }
        .cellc-render .arrow.conv path { fill: #1f6feb; }
        .cellc-render .arrow.pool path { fill: #c4511a; }
        .cellc-render .arrow.identity path { fill: #6e7781; }
        .cellc-render .arrow.motif path { fill: #1a7f37; }
        .cellc-render .arrow.dead path { fill: #8c959f; opacity: 0.45; }
        .cellc-render .edge-label {
          font-family: "DejaVu Sans Mono", Menlo, Consolas, "Liberation Mono", monospace; font-size: 11px;
          text-anchor: middle; paint-order: stroke; stroke: #ffffff; stroke-width: 3px; stroke-linejoin: round;
        }
        .cellc-render .label-bg { fill: #ffffff; }
        .cellc-render .edge-label[data-kind="conv"] { fill: #0b4fb8; }
        .cellc-render .edge-label[data-kind="pool"] { fill: #9a3c0e; }
        .cellc-render .edge-label[data-kind="identity"] { fill: #57606a; }
        .cellc-render .edge-label[data-kind="motif"] { fill: #116329; font-weight: 700; }
        .cellc-render .edge-label.dead { fill: #6e7781; opacity: 0.75; font-style: italic; }
        .cellc-render .node .shape { fill: #ffffff; stroke: #1f2328; stroke-width: 1.6; }
        .cellc-render .node.io .shape { fill: #ddf4ff; }
        .cellc-render .node.merge .shape { fill: #fff1c2; stroke: #9a6700; stroke-width: 2; }
        .cellc-render .node.dead { opacity: 0.4; }
        .cellc-render .node.dead .shape { stroke-dasharray: 3 3; fill: none; }
        .cellc-render .node-index { font-size: 12px; font-weight: 700; text-anchor: middle; }
        .cellc-render .node-caption { font-size: 10.5px; text-anchor: middle; fill: #57606a; }
        .cellc-render .legend { font-size: 12px; fill: #57606a; }
        .cellc-render .note { font-size: 12px; }
        @media (prefers-color-scheme: dark) {
          .cellc-render .backdrop { fill: #15191e; }
          .cellc-render text { fill: #e6edf3; }
          .cellc-render .subheading, .cellc-render .panel-info, .cellc-render .legend, .cellc-render .node-caption { fill: #9aa4ae; }
          .cellc-render .panel { fill: #1d232a; stroke: #38414b; }
          .cellc-render .panel.cell { stroke: #6e7781; }
          .cellc-render .edge.conv { stroke: #6cb0ff; }
          .cellc-render .edge.pool { stroke: #f5a26b; }
          .cellc-render .edge.identity { stroke: #9aa4ae; }
          .cellc-render .edge.motif { stroke: #56d47a; }
          .cellc-render .edge.dead { stroke: #6e7781; }
          .cellc-render .arrow.conv path { fill: #6cb0ff; }
          .cellc-render .arrow.pool path { fill: #f5a26b; }
          .cellc-render .arrow.identity path { fill: #9aa4ae; }
          .cellc-render .arrow.motif path { fill: #56d47a; }
          .cellc-render .arrow.dead path { fill: #6e7781; }
          .cellc-render .edge-label { stroke: #1d232a; }
          .cellc-render .label-bg { fill: #1d232a; }
          .cellc-render .edge-label[data-kind="conv"] { fill: #8cc2ff; }
          .cellc-render .edge-label[data-kind="pool"] { fill: #ffb98a; }
          .cellc-render .edge-label[data-kind="identity"] { fill: #b1bac4; }
          .cellc-render .edge-label[data-kind="motif"] { fill: #7ee29a; }
          .cellc-render .edge-label.dead { fill: #8b949e; }
          .cellc-render .node .shape { fill: #1d232a; stroke: #e6edf3; }
          .cellc-render .node.io .shape { fill: #13324d; }
          .cellc-render .node.merge .shape { fill: #4a3a0a; stroke: #e3b341; }
          .cellc-render .node.dead .shape { fill: none; }
        }

        """;
}
