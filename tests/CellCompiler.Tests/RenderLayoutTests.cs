using System.Globalization;
using System.Text.RegularExpressions;
using System.Xml.Linq;
using CellCompiler.Input;
using CellCompiler.Rendering;
using CellCompiler.Sampling;
using CellCompiler.Vocabulary;

namespace CellCompiler.Tests;

/// <summary>
/// Dense generated cells, drawn (issue 14, section 2): from <see cref="GenotypeSampler"/> with a
/// declared primitive of every kind (long names included), flat cells up to complete 12-node DAGs and
/// three-level hierarchies with dead code. Checked geometrically on the SVG as written (panel offsets
/// applied): no two label boxes intersect anywhere in the picture (dead labels included), every label
/// and caption lies within the picture, no label lies on another edge's line, and every arrowhead has a
/// straight run of line to sit on. The same checks run in Chromium with real font metrics in
/// <see cref="PictureScreenshotTests"/>.
/// </summary>
public sealed class RenderLayoutTests
{
    private static readonly XNamespace Svg = "http://www.w3.org/2000/svg";

    /// <summary>One declaration per kind, with non-default parameters and a name too long for a label.</summary>
    internal const string AllKinds = """
        {"wide7":{"kind":"conv","kernel":7,"act":"silu"},
         "dw5":{"kind":"dwconv","kernel":5,"dilation":2},
         "sep7x2":{"kind":"sepconv","kernel":7,"repeat":2},
         "strip7":{"kind":"factorized","kernel":7},
         "bneck_se_hardswish_expand6":{"kind":"mbconv","kernel":5,"expand":6,"se":0.25,"act":"hardswish"},
         "maxpool5":{"kind":"maxpool","kernel":5},
         "avg5":{"kind":"avgpool","kernel":5}}
        """;

    internal static PrimitiveTable Vocabulary { get; } = PrimitiveDeclarations.Parse(System.Text.Encoding.UTF8.GetBytes(AllKinds), "test vocabulary");

    /// <summary>(nodes per level, motifs per level, none weight): dense flat cells, and hierarchies with dead code.</summary>
    private static readonly (int[] Nodes, int[] Motifs, double None)[] Shapes =
    [
        ([12], [1], 0), ([9], [1], 0), ([11], [1], 1), ([6, 7], [4, 1], 0), ([5, 6, 5], [3, 3, 1], 1), ([8, 6], [5, 1], 2),
    ];

    public static IEnumerable<Genotype> DenseCells(int perShape = 4)
    {
        foreach (var (nodes, motifs, none) in Shapes)
        {
            var sampler = new GenotypeSampler(nodes, motifs, none, seed: 14 + nodes.Sum(), primitives: Vocabulary);
            foreach (var genotype in sampler.Sample(perShape)) yield return genotype;
        }
    }

    private static bool HasClass(XElement e, string c) => ((string?)e.Attribute("class") ?? "").Split(' ').Contains(c);

    private static double D(XElement e, string name) => double.Parse((string)e.Attribute(name)!, CultureInfo.InvariantCulture);

    /// <summary>The panel offset of an element, from its enclosing motif group's translate(x,y).</summary>
    private static (double X, double Y) Offset(XElement element)
    {
        var group = element.Ancestors(Svg + "g").FirstOrDefault(g => HasClass(g, "motif"));
        if (group is null) return (0, 0);
        var m = Regex.Match((string)group.Attribute("transform")!, @"translate\(([-0-9.]+),([-0-9.]+)\)");
        return (double.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture), double.Parse(m.Groups[2].Value, CultureInfo.InvariantCulture));
    }

    [Fact]
    public void Dense_generated_cells_have_no_overlapping_labels_and_every_label_lies_within_the_picture()
    {
        var checkedLabels = 0;
        var sawDead = false;
        foreach (var genotype in DenseCells())
        {
            var svg = XDocument.Parse(CellRenderer.Svg(genotype));
            var root = svg.Root!;
            var picture = new Box(0, 0, D(root, "width"), D(root, "height"));
            var labels = root.Descendants(Svg + "rect").Where(r => HasClass(r, "label-bg") && r.Ancestors(Svg + "g").Any(g => HasClass(g, "motif")))
                .Select(r =>
                {
                    var (x, y) = Offset(r);
                    return new Box(D(r, "x") + x, D(r, "y") + y, D(r, "width"), D(r, "height"));
                }).ToList();
            var texts = root.Descendants(Svg + "text").Where(t => HasClass(t, "edge-label") && t.Ancestors(Svg + "g").Any(g => HasClass(g, "motif"))).ToList();
            Assert.Equal(texts.Count, labels.Count);
            sawDead |= texts.Any(t => HasClass(t, "dead"));
            for (var i = 0; i < labels.Count; i++)
            {
                Assert.True(picture.Contains(labels[i]), $"{genotype.Id}: label '{texts[i].Value}' at {labels[i]} lies outside the picture {picture}");
                for (var j = i + 1; j < labels.Count; j++)
                    Assert.False(labels[i].Intersects(labels[j]),
                        $"{genotype.Id}: labels '{texts[i].Value}' {labels[i]} and '{texts[j].Value}' {labels[j]} overlap");
                // The text sits on its background: same centre.
                var (ox, oy) = Offset(texts[i]);
                Assert.Equal(labels[i].Centre.X, D(texts[i], "x") + ox, 0.2);
            }
            checkedLabels += labels.Count;

            // Node captions ("in", "out", "merge 3") never overlap each other or a label, and lie inside.
            var captions = root.Descendants(Svg + "text").Where(t => HasClass(t, "node-caption")).Select(t =>
            {
                var (x, y) = Offset(t);
                var width = PanelLayout.CaptionWidth(t.Value);
                return new Box(D(t, "x") + x - width / 2, D(t, "y") + y - PanelLayout.CaptionFontSize, width, PanelLayout.CaptionFontSize + 3);
            }).ToList();
            foreach (var caption in captions)
            {
                Assert.True(picture.Contains(caption), $"{genotype.Id}: a caption lies outside the picture");
                Assert.DoesNotContain(labels, l => l.Intersects(caption));
                Assert.Single(captions, c => c.Intersects(caption));
            }
        }
        Assert.True(checkedLabels > 500, $"only {checkedLabels} labels were checked");
        Assert.True(sawDead, "no generated cell had a dead edge: the dead labels were not checked");
    }

    [Fact]
    public void No_label_lies_on_another_edges_line_and_every_arrowhead_has_a_straight_run()
    {
        foreach (var genotype in DenseCells())
        {
            var model = RenderModel.Build(genotype);
            foreach (var panel in model.Panels)
            {
                var layout = new PanelLayout(panel, ["level"]);
                var panelBox = new Box(0, 0, layout.Width, layout.Height);
                foreach (var edge in layout.Edges)
                {
                    Assert.True(panelBox.Contains(edge.Label), $"{genotype.Id}/{panel.Motif.Name}: label {edge.LabelText} leaves its panel");
                    foreach (var other in layout.Edges.Where(o => o != edge))
                        for (var i = 0; i + 1 < other.Route.Count; i++)
                            Assert.False(SegmentHits(other.Route[i], other.Route[i + 1], edge.Label, margin: 1),
                                $"{genotype.Id}/{panel.Motif.Name}: the label '{edge.LabelText}' lies on the line of {other.Edge.Edge.From}->{other.Edge.Edge.To}");
                    // The last segment carries the arrowhead (8 units): it must be longer than the head plus a corner.
                    var (a, b) = (edge.Route[^2], edge.Route[^1]);
                    var last = Math.Abs(b.X - a.X) + Math.Abs(b.Y - a.Y) - edge.CornerRadius;
                    Assert.True(last >= 12, $"{genotype.Id}/{panel.Motif.Name}: the arrow of {edge.LabelText} sits on a run of {last:0.0}");
                }
            }
        }
    }

    /// <summary>An axis-parallel segment (all routes are) passes through the box grown by a margin.</summary>
    private static bool SegmentHits(Point a, Point b, Box box, double margin)
    {
        var grown = new Box(box.X - margin, box.Y - margin, box.Width + 2 * margin, box.Height + 2 * margin);
        var segment = new Box(Math.Min(a.X, b.X), Math.Min(a.Y, b.Y), Math.Abs(b.X - a.X) + 1e-6, Math.Abs(b.Y - a.Y) + 1e-6);
        return grown.Intersects(segment);
    }

    [Fact]
    public void Each_family_is_drawn_in_its_own_class_and_pattern_and_the_legend_names_every_declared_primitive()
    {
        var genotype = DenseCells(perShape: 1).First();
        var text = CellRenderer.Svg(genotype);
        var svg = XDocument.Parse(text);
        var model = RenderModel.Build(genotype);
        foreach (var panel in model.Panels)
        {
            var group = svg.Descendants(Svg + "g").Single(g => HasClass(g, "motif") && (string?)g.Attribute("data-motif") == panel.Motif.Name);
            var paths = group.Descendants(Svg + "path").Where(p => HasClass(p, "edge")).ToList();
            Assert.Equal(panel.Edges.Count, paths.Count);
            foreach (var edge in panel.Edges)
                Assert.Contains(paths, p => HasClass(p, LineFamilies.Style(edge.Family).Css) && HasClass(p, "dead") == edge.IsDead);
        }
        // The stylesheet gives each family the table's pattern.
        foreach (var family in LineFamilies.All)
        {
            var style = LineFamilies.Style(family);
            var rule = Regex.Match(text, $@"\.cellc-render \.edge\.{style.Css} \{{([^}}]*)\}}").Groups[1].Value;
            Assert.Contains($"var(--cellc-{style.Css}-line)", rule);
            if (style.Dash is { } dash) Assert.Contains($"stroke-dasharray: {dash}", rule);
            else Assert.DoesNotContain("dasharray", rule);
        }
        // The legend: one entry per family drawn, one per declared primitive with its kind and every parameter.
        var entries = svg.Descendants(Svg + "g").Where(g => HasClass(g, "legend-entry")).ToList();
        foreach (var family in model.Families)
            Assert.Contains(entries, e => (string?)e.Attribute("data-family") == LineFamilies.Style(family).Css);
        foreach (var (name, definition) in genotype.Primitives.Declared)
        {
            var entry = Assert.Single(entries, e => (string?)e.Attribute("data-primitive") == name);
            var words = string.Concat(entry.Descendants(Svg + "text").Select(t => t.Value));
            Assert.Contains($"{name}: {definition.Kind.Name}", words);
            foreach (var (parameter, value) in definition.Values())
                Assert.Contains($"{PrimitiveDefinition.ParameterName(parameter)} {value}", words);
            // Its sample line is its family's.
            Assert.Contains(entry.Descendants(Svg + "path"), p => HasClass(p, LineFamilies.Style(LineFamilies.Of(definition.Kind.Family)).Css));
        }
    }

    [Fact]
    public void The_legends_dead_sample_shows_a_dead_line_and_a_dead_label()
    {
        var genotype = GenotypeReader.ReadFile(Support.RepoPaths.Fixture("tidepool-deadcode.json"));
        var svg = XDocument.Parse(CellRenderer.Svg(genotype));
        var dead = Assert.Single(svg.Descendants(Svg + "g"), g => HasClass(g, "legend-entry") && (string?)g.Attribute("data-family") == "dead");
        Assert.Contains(dead.Descendants(Svg + "path"), p => HasClass(p, "edge") && HasClass(p, "dead"));
        Assert.Contains(dead.Descendants(Svg + "text"), t => HasClass(t, "edge-label") && HasClass(t, "dead"));
        Assert.Contains(dead.Descendants(Svg + "text"), t => t.Value.Contains("removed when lowering", StringComparison.Ordinal));
    }
}
