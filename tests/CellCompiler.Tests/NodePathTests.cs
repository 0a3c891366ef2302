using CellCompiler.Compilation;
using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.OnnxFormat;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// <see cref="NodePath"/> builds node names and parses them back (the latency breakdown, calibration
/// and export-torch read them): parsing must give back the parts a name was built from, and a name
/// that is not ours must be <see cref="NetworkPart.Other"/>.
/// </summary>
public sealed class NodePathTests
{
    /// <summary>A scope the lowering puts layers under, with what parsing any name in it must give.</summary>
    private sealed record Scope(string Path, NetworkPart Part, IReadOnlyList<string> Ops, IReadOnlyList<string> Motifs, IReadOnlyList<string> Module);

    /// <summary>
    /// Every scope of a genotype on a skeleton, built with NodePath's builders from the genotype's
    /// live edges: stem, reductions, each primitive edge (through its motifs) and each merge.
    /// </summary>
    private static List<Scope> Scopes(Genotype genotype, Skeleton skeleton)
    {
        var liveness = Liveness.Analyse(genotype);
        var scopes = new List<Scope> { new(NodePath.Stem.Value, new(NetworkPartKind.Stem), [], [], ["stem"]) };
        for (var t = 0; t < skeleton.Stages.Count; t++)
        {
            if (t > 0)
                scopes.Add(new(NodePath.Reduction(t - 1).Value, new(NetworkPartKind.Reduction, t - 1), [], [], [$"reduce{t - 1}"]));
            for (var c = 0; c < skeleton.Stages[t].Cells; c++)
                AddMotif(scopes, genotype, liveness, skeleton.Merge, genotype.TopLevel, genotype.Cell.Name,
                    NodePath.Cell(t, c), new(NetworkPartKind.Cell, t, c), [], [$"stage{t}", $"cell{c}"]);
        }
        scopes.Add(new(NodePath.Head.Value, new(NetworkPartKind.Head), [], [], ["head"]));
        return scopes;
    }

    private static void AddMotif(List<Scope> scopes, Genotype genotype, Liveness liveness, MergeMode merge, int level, string motif,
        NodePath path, NetworkPart part, List<string> ops, List<string> module)
    {
        var live = liveness.Of(level, motif).LiveEdges;
        foreach (var edge in live.Where(e => e.Op != Primitives.Identity))
        {
            var edgePath = path.Edge(edge.Index, edge.Op);
            List<string> edgeOps = [.. ops, edge.Op], edgeModule = [.. module, $"e{edge.Index}"];
            if (level > 0) AddMotif(scopes, genotype, liveness, merge, level - 1, edge.Op, edgePath, part, edgeOps, edgeModule);
            else scopes.Add(new(edgePath.Value, part, edgeOps, ops, edgeModule));
        }
        // A node with two or more live inputs (identity edges included) is a merge; every op above it is a motif.
        foreach (var node in live.GroupBy(e => e.To).Where(g => g.Count() > 1).Select(g => g.Key))
            scopes.Add(new(path.Merge(node, Skeleton.MergeName(merge)).Value, part, ops, ops, [.. module, $"n{node}"]));
    }

    /// <summary>The scope a node name was built under: the longest scope that is the name or a folder of it.</summary>
    private static Scope ScopeOf(IEnumerable<Scope> scopes, string name) =>
        scopes.Where(s => name == s.Path || name.StartsWith(s.Path + "/", StringComparison.Ordinal)).MaxBy(s => s.Path.Length)
        ?? throw new Xunit.Sdk.XunitException($"node '{name}' lies under no scope built from the genotype");

    public static TheoryData<string, string, bool> Cases()
    {
        var cases = new TheoryData<string, string, bool>();
        foreach (var fixture in new[] { "tidepool-h3.json", "tidepool-vocab.json", "tidepool-bottleneck.json", "tidepool-deadcode.json", "tidepool-flat11.json" })
        {
            foreach (var preset in SkeletonPresets.All.Keys) cases.Add(fixture, preset, false);
            cases.Add(fixture, SkeletonPresets.Default, true); // the presets all concat: sum merges once per fixture
        }
        return cases;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Every_node_name_of_a_compiled_model_parses_back_to_the_parts_it_was_built_from(string fixture, string preset, bool sum)
    {
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture(fixture));
        var skeleton = SkeletonPresets.All[preset] with { Merge = sum ? MergeMode.Sum : SkeletonPresets.All[preset].Merge };
        // full224's weights take a while to draw: its names are the network's op names, which the proxy case shows ONNX keeps.
        var names = preset == "full224"
            ? Compiler.CompileFigures(genotype, skeleton).Network.Network.Ops.Select(op => op.Name).ToList()
            : ModelProto.Parser.ParseFrom(Compiler.Compile(genotype, skeleton).OnnxBytes).Graph.Node.Select(n => n.Name).ToList();
        var scopes = Scopes(genotype, skeleton);

        Assert.Equal(names.Count, names.Distinct().Count());
        var used = new HashSet<Scope>();
        foreach (var name in names)
        {
            var scope = ScopeOf(scopes, name);
            used.Add(scope);
            Assert.Equal(scope.Part, NodePath.PartOf(name));
            Assert.Equal(scope.Ops, NodePath.AppliedOps(name));
            Assert.Equal(scope.Motifs, NodePath.AppliedMotifs(name));
            Assert.Equal([.. scope.Module, .. name[scope.Path.Length..].Split('/', StringSplitOptions.RemoveEmptyEntries)], NodePath.ModuleSegments(name));
        }
        // Every scope holds a node: the names cover the whole live genotype, not only some of it.
        Assert.Empty(scopes.Except(used).Select(s => s.Path));
    }

    [Theory]
    [InlineData("stem/conv", "stem")]
    [InlineData("stem/pool", "stem")]
    [InlineData("stage0/cell0/e0:conv1x1/conv", "stage0/cell0")]
    [InlineData("stage1/cell0/e2:reef/e0:anemone/e1:dwconv3x3/conv", "stage1/cell0")]
    [InlineData("stage12/cell34/n3:concat/cat", "stage12/cell34")]
    [InlineData("stage0/cell1/e0:reef/n2:sum", "stage0/cell1")]
    [InlineData("reduce0/dw", "reduce0")]
    [InlineData("reduce10/pw", "reduce10")]
    [InlineData("head/gemm", "head")]
    // Names ONNX Runtime 1.31 profiled for tidepool-vocab: it keeps our name as the prefix of a node it rewrites...
    [InlineData("stem/relu_nchwc", "stem")]
    [InlineData("stage0/cell0/e0:urchin/e0:bneck3/expand/silu/QuickGeluFusion/", "stage0/cell0")]
    [InlineData("stage0/cell0/e2:limpet/n3:concat/relu_nchwc", "stage0/cell0")]
    // ...and the layout reorders it adds are nobody's.
    [InlineData("ReorderOutput_token_388", "other")]
    [InlineData("ReorderInput", "other")]
    // Other names that are not ours: relative or malformed paths, our words without their numbers or with a leading zero.
    [InlineData("", "other")]
    [InlineData("stem", "other")]
    [InlineData("head", "other")]
    [InlineData("/stem/conv", "other")]
    [InlineData("stage1/cell0", "other")]
    [InlineData("stage1/conv", "other")]
    [InlineData("stage/cell0/conv", "other")]
    [InlineData("stage1/cell/conv", "other")]
    [InlineData("stage-1/cell0/conv", "other")]
    [InlineData("stage1/cell+2/conv", "other")]
    [InlineData("stage99999999999/cell0/conv", "other")]
    [InlineData("stage01/cell0/conv", "other")]
    [InlineData("stage1/cell00/conv", "other")]
    [InlineData("reduce/dw", "other")]
    [InlineData("reduce00/dw", "other")]
    [InlineData("reduce1x/dw", "other")]
    [InlineData("stems/conv", "other")]
    [InlineData("Stem/conv", "other")]
    [InlineData("header/gemm", "other")]
    public void The_part_the_latency_breakdown_groups_a_node_by_is_read_from_its_name(string name, string part)
    {
        var parsed = NodePath.PartOf(name);
        Assert.Equal(part, parsed.ToString());
        // A part is only ever read from a name that starts with that part's own path: parse then build gives the name's prefix.
        if (parsed != NetworkPart.Other) Assert.StartsWith(parsed + "/", name, StringComparison.Ordinal);
    }

    [Fact]
    public void The_latency_breakdown_sums_kernel_time_by_part_in_network_order_and_by_motif()
    {
        var micros = new Dictionary<string, double>
        {
            ["head/gemm"] = 4,
            ["stage1/cell0/e0:shelf/e1:anemone/e0:conv1x1/conv"] = 6,
            ["reduce0/dw"] = 2,
            ["stage0/cell0/e0:reef/e1:barnacle/e0:sepconv3x3/dw"] = 20,
            ["stage0/cell0/n4:concat/conv"] = 5,
            ["stem/conv"] = 10,
            ["ReorderOutput_0"] = 3,
        };
        var breakdown = LatencyBreakdown.FromProfile(new KernelProfile(micros, new Dictionary<string, string>(), Runs: 2), ours: true);

        Assert.Equal(["stem", "stage0/cell0", "reduce0", "stage1/cell0", "head", "other"], breakdown.Parts.Select(p => p.Part));
        Assert.Equal([10.0, 25, 2, 6, 4, 3], breakdown.Parts.Select(p => p.Microseconds));
        Assert.Equal(50, breakdown.Parts[1].Percent, 9);
        Assert.Equal(25, breakdown.MicrosecondsPerRun, 9);
        // A motif counts the time of every node under it; the cell's own merge is under none.
        Assert.Equal([("barnacle", 20.0), ("reef", 20.0), ("anemone", 6.0), ("shelf", 6.0)], breakdown.TopMotifs.Select(m => (m.Part, m.Microseconds)));
    }

    [Fact]
    public void Every_node_onnx_runtime_profiles_falls_in_the_part_of_our_node_it_came_from()
    {
        var model = Compiler.Compile(GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-vocab.json")), SkeletonPresets.All["proxy"]);
        var ours = model.Network.Network.Ops.Select(op => op.Name).ToList();
        var profiled = KernelProfile.Collect(model.OnnxBytes, batch: 1, threads: 1, warmup: 0, runs: 1).MicrosecondsByNode.Keys.ToList();

        foreach (var name in profiled)
        {
            // The runtime appends to the name of the node it rewrites ("_nchwc", "/QuickGeluFusion/"); a node of its own starts with none of ours.
            var origin = ours.Where(o => name.StartsWith(o, StringComparison.Ordinal)).MaxBy(o => o.Length);
            Assert.Equal(origin is null ? NetworkPart.Other : NodePath.PartOf(origin), NodePath.PartOf(name));
        }
        // Both kinds are there: rewritten nodes of ours, and the runtime's own.
        Assert.Contains(profiled, n => !ours.Contains(n) && NodePath.PartOf(n) != NetworkPart.Other);
        Assert.Contains(profiled, n => NodePath.PartOf(n) == NetworkPart.Other);
    }
}
