using System.Text.Json;
using CellCompiler.Input;

namespace CellCompiler.Tests.Support;

/// <summary>A mutable copy of a genotype, for tests that respell one and compare hashes.</summary>
public sealed class GenotypeDraft
{
    public sealed class DraftLevel
    {
        public int Nodes;
        public List<(string Name, List<(int From, int To, string Op)> Edges)> Motifs = [];
    }

    public List<DraftLevel> Levels { get; } = [];

    public static GenotypeDraft From(Genotype genotype)
    {
        var draft = new GenotypeDraft();
        foreach (var level in genotype.Levels)
            draft.Levels.Add(new DraftLevel
            {
                Nodes = level.Nodes,
                Motifs = level.Motifs.Select(m => (m.Name, m.Edges.Select(e => (e.From, e.To, e.Op)).ToList())).ToList(),
            });
        return draft;
    }

    public string ToJson() => JsonSerializer.Serialize(new
    {
        format = "genotype/1",
        levels = Levels.Select(l => new
        {
            nodes = l.Nodes,
            motifs = l.Motifs.ToDictionary(m => m.Name, m => new { edges = m.Edges.Select(e => new object[] { e.From, e.To, e.Op }) }),
        }),
    });

    public Genotype Parse() => GenotypeReader.Parse(ToJson(), "draft", "draft");

    /// <summary>Renames a motif of level k and every use of it in level k+1.</summary>
    public void Rename(int k, string from, string to)
    {
        var motifs = Levels[k].Motifs;
        var index = motifs.FindIndex(m => m.Name == from);
        motifs[index] = (to, motifs[index].Edges);
        if (k + 1 < Levels.Count)
            foreach (var (_, edges) in Levels[k + 1].Motifs)
                for (var e = 0; e < edges.Count; e++)
                    if (edges[e].Op == from) edges[e] = (edges[e].From, edges[e].To, to);
    }

    /// <summary>Renumbers the inner nodes of a level by a permutation that keeps every edge pointing forward.</summary>
    public void Relabel(int k, Random random)
    {
        var level = Levels[k];
        var n = level.Nodes;
        // A random topological order of all nodes, with 0 first and n-1 last.
        var preds = new List<int>[n];
        for (var v = 0; v < n; v++) preds[v] = [];
        foreach (var (_, edges) in level.Motifs)
            foreach (var e in edges)
                preds[e.To].Add(e.From);
        var placed = new bool[n];
        var order = new List<int> { 0 };
        placed[0] = true;
        while (order.Count < n - 1)
        {
            var ready = Enumerable.Range(1, n - 2).Where(v => !placed[v] && preds[v].All(p => placed[p])).ToList();
            var pick = ready[random.Next(ready.Count)];
            placed[pick] = true;
            order.Add(pick);
        }
        order.Add(n - 1);
        var newIndex = new int[n];
        for (var position = 0; position < n; position++) newIndex[order[position]] = position;
        foreach (var (_, edges) in level.Motifs)
            for (var e = 0; e < edges.Count; e++)
                edges[e] = (newIndex[edges[e].From], newIndex[edges[e].To], edges[e].Op);
    }
}
