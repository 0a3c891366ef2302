using System.Text;

namespace CellCompiler.Rendering;

/// <summary>
/// Writes a <see cref="RenderModel"/> as a Graphviz digraph: one `cluster_` subgraph per drawn
/// motif (the cell first), nodes named "motif:i", edges labelled with their op, dead nodes and
/// edges dashed and grey, merges as diamonds, left to right. Every identifier is quoted.
/// </summary>
public static class DotWriter
{
    public static string Write(RenderModel model)
    {
        var dot = new StringBuilder();
        dot.Append("digraph ").Append(Quote(model.GenotypeName)).Append(" {\n");
        dot.Append("  rankdir=LR;\n");
        dot.Append("  newrank=true;\n");
        dot.Append("  fontname=\"Helvetica\";\n");
        dot.Append("  labelloc=t;\n");
        dot.Append("  label=").Append(Quote(GraphLabel(model))).Append(";\n");
        dot.Append("  node [shape=circle, fontname=\"Helvetica\", fontsize=11, width=0.4, fixedsize=false];\n");
        dot.Append("  edge [fontname=\"Courier\", fontsize=10, arrowsize=0.7];\n");

        // Graphviz stacks clusters of a left-to-right graph bottom-up: emit them in reverse so the cell is on top.
        foreach (var panel in model.Panels.Reverse())
        {
            var name = panel.Motif.Name;
            dot.Append("\n  subgraph ").Append(Quote("cluster_" + name)).Append(" {\n");
            dot.Append("    label=").Append(Quote(PanelLabel(panel))).Append(";\n");
            dot.Append("    style=rounded;\n");
            dot.Append("    color=").Append(panel.IsCell ? "\"#57606a\"" : "\"#bbbbbb\"").Append(";\n");
            foreach (var node in panel.Nodes)
            {
                var attributes = new List<string> { "label=" + Quote(NodeLabel(node)) };
                if (node.IsMerge) attributes.Add("shape=diamond");
                if (node.IsInput || node.IsOutput) attributes.Add("style=" + (node.IsDead ? "\"filled,dashed\"" : "filled"));
                else if (node.IsDead) attributes.Add("style=dashed");
                if (node.IsInput || node.IsOutput) attributes.Add("fillcolor=\"#ddf4ff\"");
                if (node.IsDead) attributes.Add("color=gray, fontcolor=gray");
                dot.Append("    ").Append(Quote(NodeId(name, node.Index)))
                    .Append(" [").Append(string.Join(", ", attributes)).Append("];\n");
            }
            foreach (var edge in panel.Edges)
            {
                var e = edge.Edge;
                var attributes = new List<string> { "label=" + Quote(e.Op) };
                if (edge.IsDead) attributes.Add("style=dashed, color=gray, fontcolor=gray");
                else if (edge.Kind == EdgeKind.Motif) attributes.Add("penwidth=1.8");
                else if (edge.Kind == EdgeKind.Identity) attributes.Add("style=dotted");
                dot.Append("    ").Append(Quote(NodeId(name, e.From))).Append(" -> ").Append(Quote(NodeId(name, e.To)))
                    .Append(" [").Append(string.Join(", ", attributes)).Append("];\n");
            }
            dot.Append("  }\n");
        }
        dot.Append("}\n");
        return dot.ToString();
    }

    public static string NodeId(string motif, int index) => $"{motif}:{index}";

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

    private static string NodeLabel(RenderNode node) =>
        node.IsInput ? "in" : node.IsOutput ? "out" : node.Index.ToString(System.Globalization.CultureInfo.InvariantCulture);

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
