using System.Globalization;
using System.Text;

namespace CellCompiler.Rendering;

/// <summary>
/// Writes a <see cref="RenderModel"/> as a Graphviz digraph carrying what the SVG carries, in the
/// palette's light theme: one `cluster_` subgraph per drawn motif in the SVG's order (the cell first
/// and on top), nodes numbered as in the SVG (input and output also marked "in" and "out"), edges
/// labelled with their op in their line family's colour and pattern (<see cref="LineFamilies"/>),
/// merges as diamonds, dead nodes and edges in the dead ink with muted labels, and a key
/// (`cluster_key`) with the families drawn, the dead style, the merge shape and every declared
/// primitive with its parameters. Every identifier is quoted.
/// </summary>
public static class DotWriter
{
    public const string KeyCluster = "cluster_key";

    public static string Write(RenderModel model)
    {
        var theme = Palette.Light;
        var dot = new StringBuilder();
        dot.Append("digraph ").Append(Quote(model.GenotypeName)).Append(" {\n");
        dot.Append("  rankdir=LR;\n");
        dot.Append("  newrank=true;\n");
        dot.Append("  bgcolor=").Append(Quote(theme.Page)).Append(";\n");
        dot.Append("  fontname=\"Helvetica\";\n");
        dot.Append("  fontcolor=").Append(Quote(theme.Text)).Append(";\n");
        dot.Append("  labelloc=t;\n");
        dot.Append("  labeljust=l;\n");
        dot.Append("  label=").Append(Quote(GraphLabel(model))).Append(";\n");
        dot.Append($"  node [shape=circle, fontname=\"Helvetica\", fontsize=11, width=0.4, fixedsize=false, style=filled, " +
                   $"fillcolor={Quote(theme.Surface)}, color={Quote(theme.Text)}, fontcolor={Quote(theme.Text)}];\n");
        dot.Append("  edge [fontname=\"Courier\", fontsize=10, arrowsize=0.8];\n");

        // Graphviz stacks the clusters of a left-to-right graph from the bottom up, in the order their
        // nodes first appear: naming each panel's first node here, last panel first, puts the panels
        // top to bottom in the order they are written below (the key last).
        dot.Append("  ").Append(Quote(KeyNode("io", "a"))).Append(';');
        foreach (var panel in model.Panels.Reverse())
            dot.Append(' ').Append(Quote(NodeId(panel.Motif.Name, 0))).Append(';');
        dot.Append('\n');

        foreach (var panel in model.Panels)
            Panel(dot, panel, theme);
        Key(dot, model, theme);
        dot.Append("}\n");
        return dot.ToString();
    }

    private static void Panel(StringBuilder dot, RenderPanel panel, Theme theme)
    {
        var name = panel.Motif.Name;
        dot.Append("\n  subgraph ").Append(Quote("cluster_" + name)).Append(" {\n");
        dot.Append("    label=").Append(Quote(PanelLabel(panel))).Append(";\n");
        dot.Append("    style=\"rounded,filled\";\n");
        dot.Append("    fillcolor=").Append(Quote(theme.Surface)).Append(";\n");
        dot.Append("    color=").Append(Quote(panel.IsCell ? theme.Muted : theme.Rule)).Append(";\n");
        foreach (var node in panel.Nodes)
        {
            var attributes = new List<string> { "label=" + Quote(node.Index.ToString(CultureInfo.InvariantCulture)) };
            if (PanelLayout.Caption(node) is { } caption) attributes.Add("xlabel=" + Quote(caption));
            if (node.IsMerge) attributes.Add($"shape=diamond, fillcolor={Quote(theme.MergeNode)}, color={Quote(theme.MergeLine)}, penwidth=2");
            else if (node.IsInput || node.IsOutput) attributes.Add($"fillcolor={Quote(theme.InputNode)}");
            if (node.IsDead)
                attributes.Add($"style=\"filled,dashed\", fillcolor={Quote(theme.Surface)}, color={Quote(theme.DeadLine)}, fontcolor={Quote(theme.Muted)}");
            dot.Append("    ").Append(Quote(NodeId(name, node.Index)))
                .Append(" [").Append(string.Join(", ", attributes)).Append("];\n");
        }
        foreach (var edge in panel.Edges)
        {
            var e = edge.Edge;
            var attributes = new List<string> { "label=" + Quote(e.Op) };
            attributes.AddRange(EdgeStyle(LineFamilies.Style(edge.Family), edge.IsDead, theme));
            attributes.Add("tooltip=" + Quote($"edge {e.Index}: {e.From} -> {e.To}, {e.Op}{(edge.IsDead ? " (dead: removed when lowering)" : "")}"));
            dot.Append("    ").Append(Quote(NodeId(name, e.From))).Append(" -> ").Append(Quote(NodeId(name, e.To)))
                .Append(" [").Append(string.Join(", ", attributes)).Append("];\n");
        }
        dot.Append("  }\n");
    }

    /// <summary>An edge's look: its family's colour (two parallel lines for rails), pattern and width; dead edges in the dead ink.</summary>
    public static IEnumerable<string> EdgeStyle(LineStyle style, bool dead, Theme theme)
    {
        var ink = theme.Families[style.Family];
        var line = dead ? theme.DeadLine : ink.Line;
        yield return "color=" + Quote(style.Rails ? $"{line}:{line}" : line);
        yield return "style=" + Quote(style.DotStyle);
        yield return "penwidth=" + style.DotPenWidth.ToString("0.#", CultureInfo.InvariantCulture);
        yield return "fontcolor=" + Quote(dead ? theme.Muted : ink.Text);
        if (dead) yield return "fontname=\"Courier-Oblique\"";
    }

    /// <summary>The key: one row per family drawn, the dead style, merge and input/output nodes, and every declared primitive.</summary>
    private static void Key(StringBuilder dot, RenderModel model, Theme theme)
    {
        dot.Append("\n  subgraph ").Append(Quote(KeyCluster)).Append(" {\n");
        dot.Append("    label=\"Key\";\n");
        dot.Append("    style=\"rounded,filled\";\n");
        dot.Append("    fillcolor=").Append(Quote(theme.Surface)).Append(";\n");
        dot.Append("    color=").Append(Quote(theme.Rule)).Append(";\n");
        dot.Append("    node [shape=plaintext, style=\"\", fontsize=10, width=0, height=0];\n");
        dot.Append("    ").Append(Quote(KeyNode("io", "a"))).Append($" [shape=circle, style=filled, fillcolor={Quote(theme.InputNode)}, label=\"0\", fontsize=9, width=0.3];\n");
        dot.Append("    ").Append(Quote(KeyNode("io", "b"))).Append(" [label=\"input and output nodes\"];\n");
        dot.Append("    ").Append(Quote(KeyNode("io", "a"))).Append(" -> ").Append(Quote(KeyNode("io", "b"))).Append(" [style=invis];\n");
        foreach (var family in model.Families)
        {
            var style = LineFamilies.Style(family);
            KeyRow(dot, "family:" + style.Css, style.Name, EdgeStyle(style, dead: false, theme), "");
        }
        if (model.HasDead)
            KeyRow(dot, "dead", "dead: removed when lowering", EdgeStyle(LineFamilies.Style(LineFamily.Convolution), dead: true, theme), "op");
        if (model.HasMerge)
        {
            dot.Append("    ").Append(Quote(KeyNode("merge", "a"))).Append($" [shape=diamond, style=filled, fillcolor={Quote(theme.MergeNode)}, " +
                $"color={Quote(theme.MergeLine)}, penwidth=2, label=\"\", width=0.25, height=0.25];\n");
            dot.Append("    ").Append(Quote(KeyNode("merge", "b"))).Append(" [label=\"merge (2 or more live inputs)\"];\n");
            dot.Append("    ").Append(Quote(KeyNode("merge", "a"))).Append(" -> ").Append(Quote(KeyNode("merge", "b"))).Append(" [style=invis];\n");
        }
        foreach (var primitive in model.Declared)
        {
            var parameters = string.Join(", ", primitive.Definition.Values()
                .Select(v => $"{Vocabulary.PrimitiveDefinition.ParameterName(v.Parameter)} {v.Value}"));
            var text = $"{primitive.Name}: {primitive.Definition.Kind.Name}, {parameters}{(primitive.Drawn ? "" : " (not drawn)")}";
            KeyRow(dot, "primitive:" + primitive.Name, text, EdgeStyle(LineFamilies.Style(primitive.Family), dead: false, theme), "");
        }
        dot.Append("  }\n");
    }

    private static void KeyRow(StringBuilder dot, string key, string text, IEnumerable<string> style, string label)
    {
        var a = Quote(KeyNode(key, "a"));
        var b = Quote(KeyNode(key, "b"));
        dot.Append("    ").Append(a).Append(" [shape=point, width=0.04, label=\"\"];\n");
        dot.Append("    ").Append(b).Append(" [label=").Append(Quote(text)).Append("];\n");
        dot.Append("    ").Append(a).Append(" -> ").Append(b).Append(" [label=").Append(Quote(label)).Append(", ")
            .Append(string.Join(", ", style)).Append("];\n");
    }

    public static string NodeId(string motif, int index) => $"{motif}:{index}";

    /// <summary>Key node ids start with '#', which motif names cannot hold, so they never meet a panel's.</summary>
    public static string KeyNode(string key, string end) => $"#key:{key}:{end}";

    /// <summary>A DOT double-quoted string: quotes and backslashes escaped, line breaks as \n.</summary>
    public static string Quote(string text)
    {
        var quoted = new StringBuilder(text.Length + 2).Append('"');
        foreach (var c in text)
        {
            switch (c)
            {
                case '"': quoted.Append("\\\""); break;
                case '\\': quoted.Append("\\\\"); break;
                case '\n': quoted.Append("\\n"); break;
                case '\r': break;
                default: quoted.Append(c); break;
            }
        }
        return quoted.Append('"').ToString();
    }

    private static string PanelLabel(RenderPanel panel)
    {
        var label = $"{panel.DisplayName} (level {panel.Level})";
        if (panel.UsedBy.Count > 0)
            label += "\nused by " + string.Join(", ", panel.UsedBy.Select(u => u.Count == 1 ? u.User : $"{u.User} x{u.Count}"));
        if (!panel.OutputIsLive) label += "\noutput dead";
        return label;
    }

    private static string GraphLabel(RenderModel model)
    {
        var lines = new List<string> { model.GenotypeName + (model.CellIsLive ? "" : " (dead cell: the output does not depend on the input)") };
        var unused = model.Omitted.Where(m => !m.IsDead).Select(m => m.Name).ToList();
        var dead = model.Omitted.Where(m => m.IsDead).Select(m => m.Name).ToList();
        if (unused.Count > 0) lines.Add("not drawn, unused: " + string.Join(", ", unused));
        if (dead.Count > 0) lines.Add("not drawn, dead (act as none): " + string.Join(", ", dead));
        return string.Join("\n", lines);
    }
}
