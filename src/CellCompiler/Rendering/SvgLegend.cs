using System.Globalization;
using System.Xml.Linq;

namespace CellCompiler.Rendering;

/// <summary>
/// The key under a picture: one entry per line family drawn (its line sample and the ops of this
/// picture in it), the dead style (a sample line and a sample label as dead labels look), merges
/// and input/output nodes, and one entry per primitive the genotype declares, with its kind,
/// every parameter and its family's line. Entries flow left to right and wrap at the picture's width.
/// Each entry is a group of class `legend-entry` with `data-family` or `data-primitive`.
/// </summary>
public static class SvgLegend
{
    private static readonly XNamespace Ns = SvgWriter.Ns;
    private const double FontSize = 12;
    private const double RowHeight = 22;
    private const double SampleWidth = 32;
    private const double EntryGap = 22;
    private const int MaxOpsListed = 4;

    private sealed record Entry(string Kind, string Key, double Width, Func<double, double, XElement> Draw);

    public static (XElement Legend, double Height) Build(RenderModel model, double x, double y, double width)
    {
        var legend = new XElement(Ns + "g", new XAttribute("class", "legend"),
            new XAttribute("transform", $"translate({SvgWriter.Num(x)},{SvgWriter.Num(y)})"));
        var lead = "Read left to right: nodes in topological order, each edge labelled with its op; none edges are not drawn.";
        var leadLines = SvgWriter.Wrap(lead, width, FontSize).ToList();
        for (var i = 0; i < leadLines.Count; i++)
            legend.Add(SvgWriter.Text("legend-lead", 0, 12 + 16 * i, leadLines[i]));
        var height = Flow(legend, KeyEntries(model), 20 + 16 * (leadLines.Count - 1), width);

        if (model.Declared.Count > 0)
        {
            legend.Add(SvgWriter.Text("legend-title", 0, height + 14, "Declared primitives"));
            height = Flow(legend, model.Declared.Select(PrimitiveEntry).ToList(), height + 22, width);
        }
        return (legend, height);
    }

    /// <summary>Places entries in rows from <paramref name="top"/>; returns the bottom of the last row.</summary>
    private static double Flow(XElement legend, IReadOnlyList<Entry> entries, double top, double width)
    {
        double at = 0, row = top;
        foreach (var entry in entries)
        {
            if (at > 0 && at + entry.Width > width)
            {
                at = 0;
                row += RowHeight;
            }
            legend.Add(new XElement(Ns + "g", new XAttribute("class", $"legend-entry {entry.Kind}"),
                new XAttribute(entry.Kind == "primitive" ? "data-primitive" : "data-family", entry.Key),
                entry.Draw(at, row)));
            at += entry.Width + EntryGap;
        }
        return entries.Count == 0 ? top : row + RowHeight;
    }

    private static List<Entry> KeyEntries(RenderModel model)
    {
        var entries = new List<Entry>();
        foreach (var family in model.Families)
        {
            var style = LineFamilies.Style(family);
            var text = family switch
            {
                LineFamily.Motif or LineFamily.Identity => style.Name,
                _ => $"{style.Name}: {OpsList(model, family)}",
            };
            entries.Add(LineEntry("family", style.Css, style, dead: false, text));
        }
        if (model.HasDead)
        {
            // The dead style as it appears: a faded line under a sample label in the dead labels' look.
            const string sample = "op";
            const string text = "dead: removed when lowering";
            var labelWidth = PanelLayout.LabelWidth(sample);
            var style = LineFamilies.Style(LineFamily.Convolution);
            entries.Add(new Entry("family", "dead", SampleWidth + 6 + labelWidth + 6 + TextMetrics.Sans(text, FontSize), (x, y) =>
            {
                var group = new XElement(Ns + "g");
                foreach (var line in SvgWriter.EdgeLines(style, dead: true, Sample(x, y), 0, null)) group.Add(line);
                var box = new Box(x + SampleWidth + 6, y + 9 - PanelLayout.LabelHeight / 2, labelWidth, PanelLayout.LabelHeight);
                group.Add(SvgWriter.LabelBackground(box));
                group.Add(new XElement(Ns + "text", new XAttribute("class", $"edge-label {style.Css} dead"),
                    new XAttribute("x", SvgWriter.Num(box.Centre.X)), new XAttribute("y", SvgWriter.Num(box.Centre.Y)),
                    new XAttribute("dy", "0.35em"), sample));
                group.Add(SvgWriter.Text("legend", box.Right + 6, y + 13, text));
                return group;
            }));
        }
        if (model.HasMerge)
            entries.Add(ShapeEntry("merge", "node merge key", "merge (2 or more live inputs)",
                (x, y) => SvgWriter.Diamond(new Point(x + 9, y + 9), 9)));
        entries.Add(ShapeEntry("io", "node io key", "input and output nodes", (x, y) => SvgWriter.Circle(new Point(x + 9, y + 9), 8)));
        return entries;
    }

    private static Entry PrimitiveEntry(DeclaredPrimitive primitive)
    {
        var style = LineFamilies.Style(primitive.Family);
        var parameters = string.Join(", ", primitive.Definition.Values()
            .Select(v => $"{Vocabulary.PrimitiveDefinition.ParameterName(v.Parameter)} {v.Value}"));
        var text = $"{primitive.Name}: {primitive.Definition.Kind.Name}, {parameters}{(primitive.Drawn ? "" : " (not drawn)")}";
        return LineEntry("primitive", primitive.Name, style, dead: false, text);
    }

    private static Entry LineEntry(string kind, string key, LineStyle style, bool dead, string text) =>
        new(kind, key, SampleWidth + 6 + TextMetrics.Sans(text, FontSize), (x, y) =>
        {
            var group = new XElement(Ns + "g");
            foreach (var line in SvgWriter.EdgeLines(style, dead, Sample(x, y), 0, null)) group.Add(line);
            group.Add(SvgWriter.Text("legend", x + SampleWidth + 6, y + 13, text));
            return group;
        });

    private static Entry ShapeEntry(string key, string cssClass, string text, Func<double, double, XElement> shape) =>
        new("family", key, 18 + 6 + TextMetrics.Sans(text, FontSize), (x, y) =>
            new XElement(Ns + "g",
                new XElement(Ns + "g", new XAttribute("class", cssClass), shape(x, y)),
                SvgWriter.Text("legend", x + 24, y + 13, text)));

    private static IReadOnlyList<Point> Sample(double x, double y) => [new Point(x, y + 9), new Point(x + SampleWidth - 2, y + 9)];

    /// <summary>The ops of one family in this picture, in order of first appearance, the first few by name.</summary>
    private static string OpsList(RenderModel model, LineFamily family)
    {
        var ops = model.Panels.SelectMany(p => p.Edges).Where(e => e.Family == family)
            .Select(e => e.Edge.Op).Distinct(StringComparer.Ordinal).ToList();
        var listed = string.Join(", ", ops.Take(MaxOpsListed).Select(PanelLayout.Shorten));
        return ops.Count > MaxOpsListed
            ? $"{listed} and {(ops.Count - MaxOpsListed).ToString(CultureInfo.InvariantCulture)} more"
            : listed;
    }
}
