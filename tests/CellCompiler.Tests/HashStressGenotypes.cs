using System.Text;

namespace CellCompiler.Tests;

/// <summary>
/// Highly symmetric genotypes at the contract's limits (64 nodes, 8 levels, up to 100,000
/// expanded ops): the worst cases for canonical labelling. The hash benchmark times the same
/// documents (bench/CellCompiler.Bench/HashBenchmarks.cs compiles this file in).
/// </summary>
public static class HashStressGenotypes
{
    public static IEnumerable<(string Name, string Json)> All() =>
    [
        ("wide-62", Document(Level(64, ("cell", Wide(64, "conv3x3"))))),
        ("bipartite-31x31", Document(Level(64, ("cell", Bipartite("conv3x3", "conv3x3"))))),
        ("complete-64", Document(Level(64, ("cell", Complete(64, "conv3x3"))))),
        ("parallel-8-levels", Document(Enumerable.Range(0, 8).Select(k => Level(6, (Name(k, 8), Wide(6, k == 0 ? "conv3x3" : Name(k - 1, 8), k < 6 ? 4 : k == 6 ? 3 : 2)))).ToArray())),
        ("chain-8-levels", Document(Enumerable.Range(0, 8).Select(k => Level(5, (Name(k, 8), Chain(5, k == 0 ? "conv3x3" : Name(k - 1, 8))))).ToArray())),
        ("wide-62x62x12", Document(
            Level(64, ("w0", Wide(64, "conv3x3"))),
            Level(64, ("w1", Wide(64, "w0"))),
            Level(14, ("cell", Wide(14, "w1"))))),
        ("bridges-bipartite-x16", Document(
            Level(4, ("bridge", [(0, 1, "conv3x3"), (0, 2, "conv3x3"), (1, 2, "conv3x3"), (1, 3, "conv3x3"), (2, 3, "conv3x3")])),
            Level(64, ("mesh", Bipartite("bridge", "bridge"))),
            Level(18, ("cell", Wide(18, "mesh"))))),
        ("bridges-complete-x9", Document(
            Level(4, ("bridge", [(0, 1, "conv3x3"), (0, 2, "sepconv3x3"), (1, 2, "conv3x3"), (1, 3, "sepconv3x3"), (2, 3, "conv3x3")])),
            Level(64, ("all", Complete(64, "bridge"))),
            Level(11, ("cell", Wide(11, "all"))))),
    ];

    private static string Name(int k, int levels) => k == levels - 1 ? "cell" : $"m{k}";

    /// <summary>0 -> j by op for every inner node j, then j -> n-1 by identity: n-2 identical branches into one merge.</summary>
    private static List<(int, int, string)> Wide(int n, string op, int branches = int.MaxValue)
    {
        var edges = new List<(int, int, string)>();
        for (var j = 1; j < n - 1 && j <= branches; j++)
        {
            edges.Add((0, j, op));
            edges.Add((j, n - 1, "identity"));
        }
        return edges;
    }

    /// <summary>On 64 nodes: 0 -> i (i &lt; 32), every i -> j (32 &lt;= j &lt; 63), j -> 63: 31 x 31 crossing branches, no two interchangeable alone.</summary>
    private static List<(int, int, string)> Bipartite(string first, string cross)
    {
        var edges = new List<(int, int, string)>();
        for (var i = 1; i < 32; i++)
        {
            edges.Add((0, i, first));
            for (var j = 32; j < 63; j++) edges.Add((i, j, cross));
        }
        for (var j = 32; j < 63; j++) edges.Add((j, 63, "identity"));
        return edges;
    }

    private static List<(int, int, string)> Complete(int n, string op)
    {
        var edges = new List<(int, int, string)>();
        for (var j = 1; j < n; j++)
            for (var i = 0; i < j; i++) edges.Add((i, j, op));
        return edges;
    }

    private static List<(int, int, string)> Chain(int n, string op) =>
        Enumerable.Range(0, n - 1).Select(i => (i, i + 1, op)).ToList();

    private static string Level(int nodes, params (string Name, List<(int From, int To, string Op)> Edges)[] motifs)
    {
        var text = new StringBuilder($"{{\"nodes\":{nodes},\"motifs\":{{");
        text.AppendJoin(",", motifs.Select(m =>
            $"\"{m.Name}\":{{\"edges\":[" + string.Join(",", m.Edges.Select(e => $"[{e.From},{e.To},\"{e.Op}\"]")) + "]}"));
        return text.Append("}}").ToString();
    }

    private static string Document(params string[] levels) =>
        "{\"format\":\"genotype/1\",\"levels\":[" + string.Join(",", levels) + "]}";
}
