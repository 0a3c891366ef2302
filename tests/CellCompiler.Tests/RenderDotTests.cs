using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Input;
using CellCompiler.Rendering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The DOT output carries what the SVG carries (issue 14): the families' colours and patterns from
/// the same table, a key with every family drawn and every declared primitive, node numbers, and the
/// motifs in the SVG's order, both in the text and on the page as Graphviz (Debian's graphviz, `dot
/// -Tjson`) lays it out.
/// </summary>
public sealed class RenderDotTests
{
    private static readonly Regex PanelEdge = new("^ +\"(?!#key)([^\"]+):([0-9]+)\" -> \"[^\"]+\" \\[(.*)\\];$", RegexOptions.Multiline);

    public static TheoryData<int> Samples() => new(Enumerable.Range(0, 6));

    private static Genotype Sample(int index) => RenderLayoutTests.DenseCells(perShape: 1).ElementAt(index);

    [Theory]
    [MemberData(nameof(Samples))]
    public void Dot_edges_have_their_familys_colour_and_pattern_and_nodes_are_numbered(int index)
    {
        var genotype = Sample(index);
        var model = RenderModel.Build(genotype);
        var dot = DotWriter.Write(model);

        var edges = PanelEdge.Matches(dot).Select(m => m.Groups[3].Value).ToList();
        var expected = model.Panels.SelectMany(p => p.Edges).ToList();
        Assert.Equal(expected.Count, edges.Count);
        // Edges are written panel by panel in the model's order; each carries its family's DOT look.
        foreach (var (edge, attributes) in expected.Zip(edges))
        {
            var style = LineFamilies.Style(edge.Family);
            var ink = edge.IsDead ? Palette.Light.DeadLine : Palette.Light.Families[edge.Family].Line;
            Assert.Contains($"color=\"{(style.Rails ? $"{ink}:{ink}" : ink)}\"", attributes);
            Assert.Contains($"style=\"{style.DotStyle}\"", attributes);
            Assert.Contains($"label={DotWriter.Quote(edge.Edge.Op)}", attributes);
        }
        // Every node is labelled with its number, as in the SVG; input and output also say so.
        foreach (var panel in model.Panels)
            foreach (var node in panel.Nodes)
            {
                var line = Regex.Match(dot, $"^ +{Regex.Escape(DotWriter.Quote(DotWriter.NodeId(panel.Motif.Name, node.Index)))} \\[(.*)\\];$", RegexOptions.Multiline);
                Assert.True(line.Success, $"node {panel.Motif.Name}:{node.Index} is not declared");
                Assert.StartsWith($"label=\"{node.Index}\"", line.Groups[1].Value);
                if (node.IsInput) Assert.Contains("xlabel=\"in", line.Groups[1].Value);
                if (node.IsOutput) Assert.Contains("out", line.Groups[1].Value);
            }
        // The key: each family drawn, the dead style when something is dead, and every declared primitive with its parameters.
        var key = dot[dot.IndexOf(DotWriter.KeyCluster, StringComparison.Ordinal)..];
        foreach (var family in model.Families)
            Assert.Contains(DotWriter.Quote(DotWriter.KeyNode("family:" + LineFamilies.Style(family).Css, "b")), key);
        Assert.Equal(model.HasDead, key.Contains(DotWriter.KeyNode("dead", "a"), StringComparison.Ordinal));
        foreach (var (name, definition) in genotype.Primitives.Declared)
        {
            var row = Regex.Match(key, $"{Regex.Escape(DotWriter.Quote(DotWriter.KeyNode("primitive:" + name, "b")))} \\[label=\"([^\"]*)\"").Groups[1].Value;
            Assert.StartsWith($"{name}: {definition.Kind.Name}", row);
            foreach (var (parameter, value) in definition.Values())
                Assert.Contains($"{Vocabulary.PrimitiveDefinition.ParameterName(parameter)} {value}", row);
        }

        using var folder = new TempFolder();
        RenderTests.AssertDotAccepts(folder.Write($"sample{index}.dot", dot));
    }

    [Theory]
    [InlineData("tidepool-h3.json")]
    [InlineData("tidepool-deadcode.json")]
    [InlineData(null)]
    public void Graphviz_lays_the_motifs_out_top_to_bottom_in_the_svgs_order(string? fixture)
    {
        var genotype = fixture is null ? Sample(4) : GenotypeReader.ReadFile(RepoPaths.Fixture(fixture));
        var model = RenderModel.Build(genotype);
        var dot = DotWriter.Write(model);
        var order = model.Panels.Select(p => p.Motif.Name).ToList();
        Assert.True(order.Count > 1, "the genotype should draw several motifs");

        // In the text: the clusters in the SVG's order, then the key.
        var clusters = Regex.Matches(dot, "subgraph \"cluster_([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
        Assert.Equal([.. order, "key"], clusters);

        // On the page: Graphviz's own layout, read from `dot -Tjson` (bounding boxes in points, y upwards).
        using var folder = new TempFolder();
        var file = folder.Write("order.dot", dot);
        var result = ProcessRunner.Run("dot", ["-Tjson", file], timeout: TimeSpan.FromMinutes(1));
        Assert.True(result.ExitCode == 0, result.Stderr);
        using var json = JsonDocument.Parse(result.Stdout);
        var tops = new Dictionary<string, double>();
        foreach (var graph in json.RootElement.GetProperty("objects").EnumerateArray())
        {
            var name = graph.GetProperty("name").GetString()!;
            if (!name.StartsWith("cluster_", StringComparison.Ordinal) || !graph.TryGetProperty("bb", out var bb)) continue;
            tops[name["cluster_".Length..]] = double.Parse(bb.GetString()!.Split(',')[3], System.Globalization.CultureInfo.InvariantCulture);
        }
        var laidOut = tops.OrderByDescending(t => t.Value).Select(t => t.Key).ToList();
        Assert.Equal([.. order, "key"], laidOut);
    }
}
