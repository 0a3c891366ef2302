using System.Text;
using CellCompiler.Input;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>Genotype documents for the hash exactness tests: enumerated spaces and hierarchical twins.</summary>
internal static class HashSpaces
{
    /// <summary>Five ops with `none` and `identity`: the op set of the well-known 4-node benchmark space.</summary>
    public static readonly string[] FiveOps = ["none", "identity", "conv1x1", "conv3x3", "avgpool3x3"];

    /// <summary>Level-0 motifs (3 nodes) for the hierarchical spaces; `pass` is an identity, `single` a conv3x3.</summary>
    private const string LevelZero = """
        {"nodes":3,"motifs":{
          "chain":{"edges":[[0,1,"conv3x3"],[1,2,"conv1x1"]]},
          "pass":{"edges":[[0,1,"identity"],[1,2,"identity"]]},
          "single":{"edges":[[0,2,"conv3x3"]]},
          "res":{"edges":[[0,1,"conv3x3"],[1,2,"avgpool3x3"],[0,2,"identity"]]}}}
        """;

    /// <summary>Every flat cell of <paramref name="nodes"/> nodes whose edges (every pair, listed) take each op of <paramref name="ops"/>.</summary>
    public static IEnumerable<string> Flat(int nodes, IReadOnlyList<string> ops) =>
        Assignments(nodes, ops).Select(edges => Document(Cell(nodes, edges)));

    /// <summary>Every flat cell of <paramref name="nodes"/> nodes over <paramref name="ops"/>, with declared primitives (contract 3.1).</summary>
    public static IEnumerable<string> FlatDeclared(int nodes, string primitives, IReadOnlyList<string> ops) =>
        Assignments(nodes, ops).Select(edges =>
            "{\"format\":\"genotype/1\",\"primitives\":" + primitives.ReplaceLineEndings("") + ",\"levels\":[" + Cell(nodes, edges) + "]}");

    /// <summary>Two levels: the fixed level-0 motifs, and every cell of <paramref name="nodes"/> nodes over <paramref name="ops"/>.</summary>
    public static IEnumerable<string> Hierarchical(int nodes, IReadOnlyList<string> ops) =>
        Assignments(nodes, ops).Select(edges =>
            Document(LevelZero, Cell(nodes, edges)));

    /// <summary>Hand-written pairs that are the same network spelled through motifs and spelled flat.</summary>
    public static IEnumerable<string> Twins() =>
    [
        // A chain motif used once, and the same chain written flat.
        Document("""{"nodes":3,"motifs":{"c":{"edges":[[0,1,"conv3x3"],[1,2,"sepconv3x3"]]}}}""",
                 """{"nodes":2,"motifs":{"cell":{"edges":[[0,1,"c"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[1,2,"sepconv3x3"]]}}}"""),
        // A chain split differently between motifs: (conv, sep) + pool vs conv + (sep, pool).
        Document("""{"nodes":3,"motifs":{"a":{"edges":[[0,1,"conv3x3"],[1,2,"sepconv3x3"]]},"b":{"edges":[[0,2,"maxpool3x3"]]}}}""",
                 """{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"a"],[1,2,"b"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"a":{"edges":[[0,2,"conv3x3"]]},"b":{"edges":[[0,1,"sepconv3x3"],[1,2,"maxpool3x3"]]}}}""",
                 """{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"a"],[1,2,"b"]]}}}"""),
        Document("""{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[1,2,"sepconv3x3"],[2,3,"maxpool3x3"]]}}}"""),
        // A motif that is only an identity edge, feeding a merge, and plain identity there.
        Document("""{"nodes":3,"motifs":{"p":{"edges":[[0,1,"identity"],[1,2,"identity"]]},"c":{"edges":[[0,2,"conv1x1"]]}}}""",
                 """{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"c"],[1,2,"p"],[0,2,"c"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"c":{"edges":[[0,2,"conv1x1"]]}}}""",
                 """{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"c"],[1,2,"identity"],[0,2,"c"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv1x1"],[0,2,"conv1x1"],[1,2,"identity"]]}}}"""),
        // Identity edges into a merge: the merge reads the tensors themselves.
        Document("""{"nodes":5,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[0,2,"conv1x1"],[1,3,"identity"],[2,4,"identity"],[3,4,"identity"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"cell":{"edges":[[0,2,"conv3x3"],[0,1,"conv1x1"],[1,2,"identity"]]}}}"""),
        // The same tensor twice into one merge (a multiset), through identities and a pass motif.
        Document("""{"nodes":3,"motifs":{"p":{"edges":[[0,1,"identity"],[1,2,"identity"]]},"c":{"edges":[[0,2,"conv3x3"]]}}}""",
                 """{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"c"],[1,2,"p"],[1,3,"identity"],[2,3,"identity"]]}}}"""),
        Document("""{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[1,2,"identity"],[1,3,"identity"],[2,3,"identity"]]}}}"""),
        // A single-op motif and the op, in parallel branches.
        Document("""{"nodes":2,"motifs":{"s":{"edges":[[0,1,"dwconv3x3"]]}}}""",
                 """{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"s"],[0,2,"s"],[1,3,"identity"],[2,3,"s"]]}}}"""),
        Document("""{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"dwconv3x3"],[0,2,"dwconv3x3"],[1,3,"identity"],[2,3,"dwconv3x3"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"dwconv3x3"],[0,2,"dwconv3x3"],[1,2,"dwconv3x3"]]}}}"""),
        // Nested merges: under sum they flatten into one Sum of three terms, under concat they stay apart.
        Document("""{"nodes":3,"motifs":{"m":{"edges":[[0,1,"conv3x3"],[0,2,"conv1x1"],[1,2,"identity"]]},"a":{"edges":[[0,2,"avgpool3x3"]]}}}""",
                 """{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"m"],[1,2,"identity"],[0,2,"a"]]}}}"""),
        Document("""{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[0,2,"conv1x1"],[1,2,"identity"],[2,3,"identity"],[0,3,"avgpool3x3"]]}}}"""),
        Document("""{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[0,2,"conv1x1"],[1,2,"identity"]]}}}"""),
        Document("""{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[0,2,"conv1x1"],[0,3,"avgpool3x3"],[1,3,"identity"],[2,3,"identity"]]}}}"""),
    ];

    /// <summary>Random hierarchical genotypes, each followed by its motifs inlined into one flat cell (when that fits in 64 nodes).</summary>
    public static IEnumerable<string> RandomWithFlattened(int seeds)
    {
        for (var seed = 0; seed < seeds; seed++)
        {
            var json = RandomGenotypes.Json(9_000 + seed, maxLevels: 3, maxNodes: 4);
            yield return json;
            var flat = Flatten(GenotypeReader.Parse(json, "random", "random"));
            if (flat is not null) yield return flat;
        }
    }

    /// <summary>
    /// The genotype with every motif inlined: each motif application gets fresh nodes for its inner
    /// nodes and output, and its output feeds the parent's node through an identity edge. The
    /// lowering rules make this the same network; null when it needs more than 64 nodes.
    /// </summary>
    public static string? Flatten(Genotype genotype)
    {
        var edges = new List<(int From, int To, string Op)>();
        var count = 1;

        int Inline(int level, string name, int input)
        {
            var nodes = genotype.Levels[level].Nodes;
            var local = new int[nodes];
            local[0] = input;
            var motif = genotype.Levels[level].Find(name)!;
            for (var j = 1; j < nodes; j++)
            {
                var pending = new List<(int From, string Op)>();
                foreach (var edge in motif.Edges.Where(e => e.To == j && e.Op != Primitives.None).OrderBy(e => e.From))
                {
                    if (level == 0 || edge.Op == Primitives.Identity) pending.Add((local[edge.From], edge.Op));
                    else pending.Add((Inline(level - 1, edge.Op, local[edge.From]), Primitives.Identity));
                }
                local[j] = count++;
                edges.AddRange(pending.Select(p => (p.From, local[j], p.Op)));
            }
            return local[nodes - 1];
        }

        Inline(genotype.TopLevel, genotype.Cell.Name, 0);
        if (count > Limits.MaxNodes) return null;
        var list = string.Join(",", edges.Select(e => $"[{e.From},{e.To},\"{e.Op}\"]"));
        return Document(Cell(count, "[" + list + "]"));
    }

    private static IEnumerable<string> Assignments(int nodes, IReadOnlyList<string> ops)
    {
        var pairs = new List<(int From, int To)>();
        for (var j = 1; j < nodes; j++)
            for (var i = 0; i < j; i++) pairs.Add((i, j));
        var choice = new int[pairs.Count];
        while (true)
        {
            var text = new StringBuilder("[");
            for (var e = 0; e < pairs.Count; e++)
                text.Append(e > 0 ? "," : "").Append($"[{pairs[e].From},{pairs[e].To},\"{ops[choice[e]]}\"]");
            yield return text.Append(']').ToString();
            var k = 0;
            while (k < choice.Length && ++choice[k] == ops.Count) choice[k++] = 0;
            if (k == choice.Length) yield break;
        }
    }

    private static string Cell(int nodes, string edges) => "{\"nodes\":" + nodes + ",\"motifs\":{\"cell\":{\"edges\":" + edges + "}}}";

    private static string Document(params string[] levels) =>
        "{\"format\":\"genotype/1\",\"levels\":[" + string.Join(",", levels.Select(l => l.ReplaceLineEndings(""))) + "]}";
}
