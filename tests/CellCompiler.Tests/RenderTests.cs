using System.Text.RegularExpressions;
using System.Xml.Linq;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Rendering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc render` (issue 5): the SVG is well-formed XML with one group per used motif (plus the
/// cell) and one edge label per live edge; dead code is drawn faded; nothing external is
/// referenced; the DOT output is accepted by Graphviz's `dot` and has one cluster per drawn motif.
/// </summary>
public sealed class RenderTests
{
    private static readonly XNamespace Svg = "http://www.w3.org/2000/svg";

    public static TheoryData<string> Fixtures()
    {
        var data = new TheoryData<string>();
        foreach (var path in Directory.GetFiles(Path.Combine(RepoPaths.Root, "fixtures"), "tidepool-*.json").Order(StringComparer.Ordinal))
        {
            var name = Path.GetFileName(path);
            if (name != "tidepool-skeleton.json") data.Add(name);
        }
        return data;
    }

    private static Genotype Read(string fixture) => GenotypeReader.ReadFile(RepoPaths.Fixture(fixture));

    /// <summary>
    /// The motifs a picture must draw, worked out here from the liveness analysis alone: the cell,
    /// then every motif named by a live edge of a motif already drawn, level by level downwards.
    /// </summary>
    private static List<(int Level, string Name)> ExpectedDrawn(Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        var drawn = new List<(int, string)> { (genotype.TopLevel, genotype.Cell.Name) };
        var current = new HashSet<string> { genotype.Cell.Name };
        for (var k = genotype.TopLevel; k > 0; k--)
        {
            var below = new HashSet<string>();
            foreach (var name in current)
                foreach (var edge in liveness.Of(k, name).LiveEdges)
                    if (edge.Op is not ("identity" or "none")) below.Add(edge.Op);
            drawn.AddRange(below.Select(name => (k - 1, name)));
            current = below;
        }
        return drawn;
    }

    private static bool HasClass(XElement element, string cssClass) =>
        ((string?)element.Attribute("class") ?? "").Split(' ', StringSplitOptions.RemoveEmptyEntries).Contains(cssClass);

    private static List<XElement> MotifGroups(XDocument svg) =>
        svg.Descendants(Svg + "g").Where(g => HasClass(g, "motif")).ToList();

    [Theory]
    [MemberData(nameof(Fixtures))]
    public void Svg_is_well_formed_with_one_group_per_drawn_motif_and_one_label_per_live_edge(string fixture)
    {
        var genotype = Read(fixture);
        var text = CellRenderer.Svg(genotype);
        var svg = XDocument.Parse(text);
        Assert.Equal(Svg + "svg", svg.Root!.Name);

        var expected = ExpectedDrawn(genotype);
        var groups = MotifGroups(svg);
        Assert.Equal(expected.Count, groups.Count);
        Assert.Equal(expected.Select(m => m.Name).Order(StringComparer.Ordinal),
            groups.Select(g => (string)g.Attribute("data-motif")!).Order(StringComparer.Ordinal));

        var liveness = Liveness.Analyse(genotype);
        foreach (var group in groups)
        {
            var name = (string)group.Attribute("data-motif")!;
            var level = expected.Single(m => m.Name == name).Level;
            var info = liveness.Of(level, name);
            var labels = group.Descendants(Svg + "text").Where(t => HasClass(t, "edge-label")).ToList();
            var liveLabels = labels.Where(t => !HasClass(t, "dead")).ToList();
            Assert.Equal(info.LiveEdges.Count, liveLabels.Count);
            // Each live edge's op appears as a label (long motif names may be shortened; none here are).
            Assert.Equal(info.LiveEdges.Select(e => e.Op).Order(StringComparer.Ordinal),
                liveLabels.Select(t => t.Value).Order(StringComparer.Ordinal));
            // Dead edges are drawn faded, `none` edges not at all.
            var motif = genotype.Levels[level].Find(name)!;
            Assert.Equal(motif.Edges.Count(e => e.Op != "none") - info.LiveEdges.Count, labels.Count - liveLabels.Count);
            // Every node is drawn, the merges (≥2 live inputs) marked.
            var nodes = group.Descendants(Svg + "g").Where(g => HasClass(g, "node")).ToList();
            Assert.Equal(genotype.Levels[level].Nodes, nodes.Count);
            var merges = info.LiveEdges.GroupBy(e => e.To).Count(g => g.Count() >= 2);
            Assert.Equal(merges, nodes.Count(n => HasClass(n, "merge")));
        }

        // The live labels across the picture equal the live edges summed over the drawn motifs.
        var totalLive = expected.Sum(m => liveness.Of(m.Level, m.Name).LiveEdges.Count);
        Assert.Equal(totalLive, svg.Descendants(Svg + "text").Count(t => HasClass(t, "edge-label") && !HasClass(t, "dead")));
    }

    [Theory]
    [MemberData(nameof(Fixtures))]
    public void Svg_references_nothing_outside_itself_and_has_a_dark_palette(string fixture)
    {
        var text = CellRenderer.Svg(Read(fixture));
        var urls = Regex.Matches(text, "https?://[^\"'\\s)]*").Select(m => m.Value).Distinct().ToList();
        Assert.Equal(["http://www.w3.org/2000/svg"], urls);
        Assert.DoesNotContain("xlink:href", text);
        Assert.DoesNotContain("@import", text);
        Assert.Contains("prefers-color-scheme: dark", text);
        // Internal references only: every url(#id) names an element of the document.
        var svg = XDocument.Parse(text);
        var ids = svg.Descendants().Select(e => (string?)e.Attribute("id")).OfType<string>().ToHashSet();
        foreach (Match reference in Regex.Matches(text, @"url\(#([^)]+)\)"))
            Assert.Contains(reference.Groups[1].Value, ids);
    }

    [Fact]
    public void Dead_code_is_drawn_faded_and_unused_or_dead_motifs_are_only_listed()
    {
        var svg = XDocument.Parse(CellRenderer.Svg(Read("tidepool-deadcode.json")));
        var groups = MotifGroups(svg).ToDictionary(g => (string)g.Attribute("data-motif")!);
        Assert.Equal(["cell", "kelp"], groups.Keys.Order(StringComparer.Ordinal));

        // kelp: 0->2 maxpool feeds nothing, node 3 is never reached; 2 and 3 are dead.
        var kelp = groups["kelp"];
        var deadNodes = kelp.Descendants(Svg + "g").Where(g => HasClass(g, "node") && HasClass(g, "dead"))
            .Select(g => (string)g.Attribute("data-node")!).Order().ToList();
        Assert.Equal(["2", "3"], deadNodes);
        var deadLabels = kelp.Descendants(Svg + "text").Where(t => HasClass(t, "edge-label") && HasClass(t, "dead"))
            .Select(t => t.Value).Order().ToList();
        Assert.Equal(["conv3x3", "maxpool3x3"], deadLabels);
        Assert.Equal(2, kelp.Descendants(Svg + "path").Count(p => HasClass(p, "edge") && HasClass(p, "dead")));

        // The cell's edge through the dead motif `drift` is dead, so is node 2.
        var cellDead = groups["cell"].Descendants(Svg + "text").Where(t => HasClass(t, "edge-label") && HasClass(t, "dead"))
            .Select(t => t.Value).Order().ToList();
        Assert.Equal(["drift", "kelp"], cellDead);

        // Neither `unused` nor the dead `drift` is drawn; both are named in the notes.
        var notes = string.Join("\n", svg.Descendants(Svg + "text").Where(t => HasClass(t, "note")).Select(t => t.Value));
        Assert.Contains("unused", notes);
        Assert.Contains("drift", notes);
    }

    [Fact]
    public void A_dead_cell_still_renders_with_everything_faded()
    {
        var svg = XDocument.Parse(CellRenderer.Svg(Read("tidepool-deadcell.json")));
        var cell = Assert.Single(MotifGroups(svg));
        var labels = cell.Descendants(Svg + "text").Where(t => HasClass(t, "edge-label")).ToList();
        Assert.Equal(4, labels.Count);
        Assert.All(labels, t => Assert.True(HasClass(t, "dead")));
        var nodes = cell.Descendants(Svg + "g").Where(g => HasClass(g, "node")).ToList();
        Assert.Equal(4, nodes.Count);
        Assert.All(nodes, n => Assert.True(HasClass(n, "dead")));
    }

    [Fact]
    public void Names_with_xml_special_characters_are_escaped()
    {
        var genotype = GenotypeReader.Parse(
            """{"format":"genotype/1","name":"a<b & \"c\" 'd'","levels":[{"nodes":3,"motifs":{"m.x-1":{"edges":[[0,1,"conv1x1"],[1,2,"identity"]]}}},{"nodes":2,"motifs":{"cell":{"edges":[[0,1,"m.x-1"]]}}}]}""",
            "test", "test");
        var svg = XDocument.Parse(CellRenderer.Svg(genotype));
        Assert.Contains(svg.Descendants(Svg + "text"), t => t.Value == "a<b & \"c\" 'd'");
        Assert.Equal(2, MotifGroups(svg).Count);

        using var folder = new TempFolder();
        var dot = folder.Write("special.dot", CellRenderer.Dot(genotype));
        AssertDotAccepts(dot);
    }

    [Theory]
    [MemberData(nameof(Fixtures))]
    public void Dot_is_accepted_by_graphviz_with_one_cluster_per_drawn_motif(string fixture)
    {
        var genotype = Read(fixture);
        var text = CellRenderer.Dot(genotype);
        var expected = ExpectedDrawn(genotype);
        // One cluster per drawn motif, and the key (DotWriter.KeyCluster) last.
        var clusters = Regex.Matches(text, "subgraph \"cluster_([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
        Assert.Equal("key", clusters[^1]);
        clusters.RemoveAt(clusters.Count - 1);
        Assert.Equal(expected.Select(m => m.Name).Order(StringComparer.Ordinal), clusters.Order(StringComparer.Ordinal));
        Assert.Contains("rankdir=LR", text);

        var liveness = Liveness.Analyse(genotype);
        // Edges of the panels (the key's sample edges start at nodes named "#key:...").
        var edges = Regex.Matches(text, "^ +\"(?!#key)[^\"]+\" -> \"[^\"]+\" \\[(.*)\\];$", RegexOptions.Multiline).Select(m => m.Groups[1].Value).ToList();
        var total = expected.Sum(m => genotype.Levels[m.Level].Find(m.Name)!.Edges.Count(e => e.Op != "none"));
        var live = expected.Sum(m => liveness.Of(m.Level, m.Name).LiveEdges.Count);
        Assert.Equal(total, edges.Count);
        // Dead edges are drawn in the palette's dead ink (DOT has no prefers-color-scheme: the light theme).
        Assert.Equal(total - live, edges.Count(e => e.Contains($"color=\"{Palette.Light.DeadLine}\"")));

        using var folder = new TempFolder();
        AssertDotAccepts(folder.Write(Path.ChangeExtension(fixture, ".dot"), text));
    }

    internal static void AssertDotAccepts(string dotFile)
    {
        ProcessResult result;
        try
        {
            result = ProcessRunner.Run("dot", ["-Tsvg", dotFile, "-o", dotFile + ".svg"], timeout: TimeSpan.FromMinutes(1));
        }
        catch (System.ComponentModel.Win32Exception e)
        {
            Assert.Fail($"Graphviz's `dot` is not installed ({e.Message}): install it with `apt-get install -y graphviz` (Debian package graphviz).");
            return;
        }
        Assert.True(result.ExitCode == 0, $"dot rejected {dotFile} (exit {result.ExitCode}):\n{result.Stderr}\n{File.ReadAllText(dotFile)}");
        Assert.DoesNotContain("Warning", result.Stderr);
        Assert.True(File.Exists(dotFile + ".svg"));
    }

    [Fact]
    public void Cli_writes_an_svg_file_and_says_so()
    {
        using var folder = new TempFolder();
        var result = ProcessRunner.Cellc(["render", RepoPaths.Fixture("tidepool-flat11.json"), "-o", "x.svg"], null, folder.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.Contains("x.svg", result.Stdout);
        var svg = XDocument.Load(folder.File("x.svg"));
        Assert.Single(MotifGroups(svg));
        // Only the picture: no temporary file left behind.
        Assert.Equal(["x.svg"], Directory.GetFiles(folder.Path).Select(Path.GetFileName));
    }

    [Fact]
    public void Cli_defaults_to_the_genotype_name_and_chooses_dot_by_extension_or_option()
    {
        using var folder = new TempFolder();
        var fixture = RepoPaths.Fixture("tidepool-h3.json");
        Assert.Equal(0, ProcessRunner.Cellc(["render", fixture], null, folder.Path).ExitCode);
        XDocument.Load(folder.File("tidepool-h3.svg"));

        Assert.Equal(0, ProcessRunner.Cellc(["render", fixture, "-o", "h3.dot"], null, folder.Path).ExitCode);
        Assert.StartsWith("digraph ", File.ReadAllText(folder.File("h3.dot")));

        var stdout = ProcessRunner.Cellc(["render", fixture, "-o", "-", "--format", "dot"], null, folder.Path);
        Assert.Equal(0, stdout.ExitCode);
        Assert.StartsWith("digraph ", stdout.Stdout);
        Assert.Contains("stdout", stdout.Stderr);
    }

    [Fact]
    public void Cli_refuses_an_unknown_extension_and_a_bad_genotype_with_exit_2()
    {
        using var folder = new TempFolder();
        var png = ProcessRunner.Cellc(["render", RepoPaths.Fixture("tidepool-flat11.json"), "-o", "x.png"], null, folder.Path);
        Assert.Equal(2, png.ExitCode);
        Assert.Contains("--output", png.Stderr);
        Assert.Empty(Directory.GetFileSystemEntries(folder.Path));

        var bad = folder.Write("bad.json", """{"format":"genotype/1","levels":[{"nodes":3,"motifs":{"cell":{"edges":[[2,1,"conv1x1"]]}}}]}""");
        var result = ProcessRunner.Cellc(["render", bad, "-o", "bad.svg"], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("bad.json", result.Stderr);
        Assert.False(File.Exists(folder.File("bad.svg")));
    }

    [Fact]
    public void Cli_renders_a_dead_cell_with_a_warning_and_exit_0()
    {
        using var folder = new TempFolder();
        var result = ProcessRunner.Cellc(["render", RepoPaths.Fixture("tidepool-deadcell.json"), "-o", "dead.svg"], null, folder.Path);
        Assert.Equal(0, result.ExitCode);
        Assert.Contains("warning", result.Stderr);
        Assert.True(File.Exists(folder.File("dead.svg")));
    }
}
