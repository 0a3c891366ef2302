using System.Security.Cryptography;
using System.Text;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Vocabulary;

namespace CellCompiler.Hashing;

/// <summary>
/// The genotype hash of contract section 4: SHA-256 of the cell's canonical form, built bottom-up.
/// A motif's canonical form is computed on its live graph after identity contraction and uses the
/// canonical forms of the motifs it applies, so names, edge order, `none` edges, unused motifs,
/// dead code and relabelled inner nodes all vanish. Beyond that, a motif that reduces to a single
/// identity or a single op stands for that op, so e.g. a motif that is only an identity edge
/// hashes like `identity`.
/// </summary>
public static class GenotypeHasher
{
    private const string Identity = Primitives.Identity;

    public static string Hash(Genotype genotype) => Hash(genotype, Liveness.Analyse(genotype));

    public static string Hash(Genotype genotype, Liveness liveness)
    {
        var form = CanonicalForm(genotype, liveness);
        var digest = SHA256.HashData(Encoding.UTF8.GetBytes("cellc-genotype/1\n" + form));
        return Convert.ToHexStringLower(digest);
    }

    /// <summary>The cell's canonical text: "none", "identity", a single op label, or a graph digest.</summary>
    public static string CanonicalForm(Genotype genotype, Liveness liveness)
    {
        var used = UsedMotifs(genotype, liveness);
        var budget = new SearchBudget();
        Dictionary<string, string?>? below = null;
        for (var k = 0; k < genotype.Levels.Count; k++)
        {
            var forms = new Dictionary<string, string?>(StringComparer.Ordinal);
            foreach (var motif in genotype.Levels[k].Motifs)
                if (used[k].Contains(motif.Name))
                    forms[motif.Name] = MotifForm(liveness.Of(k, motif.Name), genotype.Levels[k].Nodes, below, genotype.Primitives, budget);
            below = forms;
        }
        return below![genotype.Cell.Name] ?? Primitives.None;
    }

    /// <summary>Motifs applied by a live edge on the way down from the cell: only these can matter.</summary>
    private static HashSet<string>[] UsedMotifs(Genotype genotype, Liveness liveness)
    {
        var used = new HashSet<string>[genotype.Levels.Count];
        used[genotype.TopLevel] = [genotype.Cell.Name];
        for (var k = genotype.TopLevel; k > 0; k--)
        {
            used[k - 1] = new HashSet<string>(StringComparer.Ordinal);
            foreach (var name in used[k])
                foreach (var edge in liveness.Of(k, name).LiveEdges)
                    if (!Primitives.IsStructural(edge.Op)) used[k - 1].Add(edge.Op);
        }
        return used;
    }

    /// <summary>null for a dead motif; otherwise the label an edge applying this motif carries.</summary>
    private static string? MotifForm(MotifLiveness info, int nodes, Dictionary<string, string?>? below, PrimitiveTable table, SearchBudget budget)
    {
        if (!info.OutputIsLive) return null;

        // alias[j] is the node whose tensor j holds: a node fed only by one identity edge is that node.
        var alias = Enumerable.Range(0, nodes).ToArray();
        var incoming = info.LiveEdges.GroupBy(e => e.To).ToDictionary(g => g.Key, g => g.ToList());
        var edges = new List<(int From, int To, string Label)>();
        for (var j = 1; j < nodes; j++)
        {
            if (!incoming.TryGetValue(j, out var inputs)) continue;
            var labelled = inputs.Select(e => (From: alias[e.From], Label: Label(e.Op, below, table))).ToList();
            if (labelled.Count == 1 && labelled[0].Label == Identity)
            {
                alias[j] = labelled[0].From;
                continue;
            }
            edges.AddRange(labelled.Select(e => (e.From, j, e.Label)));
        }

        var output = alias[nodes - 1];
        if (output == 0) return Identity;

        // Renumber the surviving nodes densely with the input first and the output last.
        var kept = edges.SelectMany(e => new[] { e.From, e.To }).Append(0).Append(output).Distinct()
            .OrderBy(v => v == output ? int.MaxValue : v).ToList();
        if (kept.Count == 2 && edges.Count == 1) return edges[0].Label;
        var index = kept.Select((v, i) => (v, i)).ToDictionary(p => p.v, p => p.i);
        var graph = new CanonicalGraph(kept.Count, edges.Select(e => (index[e.From], index[e.To], e.Label)), budget);
        var certificate = graph.Certificate();
        return "motif:" + Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(certificate)));
    }

    /// <summary>A primitive is labelled by its definition (its name never matters); a built-in spelling keeps its short name.</summary>
    private static string Label(string op, Dictionary<string, string?>? below, PrimitiveTable table)
    {
        if (Primitives.IsStructural(op)) return op;
        if (below is not null) return below[op]!;
        var definition = table.Get(op);
        return BuiltinPrimitives.NameOf(definition) ?? definition.Key;
    }
}
