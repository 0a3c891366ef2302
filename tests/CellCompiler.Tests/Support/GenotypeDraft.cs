using System.Text.Json;
using CellCompiler.Input;

namespace CellCompiler.Tests.Support;

/// <summary>A mutable copy of a genotype, for tests that respell one and compare hashes.</summary>
public sealed class GenotypeDraft
{
    /// <summary>Contract 3.1's defaults, by the kinds that take each parameter.</summary>
    private static readonly (string Parameter, object Value, string[] Kinds)[] Defaults =
    [
        ("dilation", 1, ["conv", "dwconv", "sepconv"]),
        ("repeat", 1, ["sepconv"]),
        ("expand", 6, ["mbconv"]),
        ("se", 0, ["mbconv"]),
        ("act", "relu", ["conv", "dwconv", "sepconv", "factorized", "mbconv"]),
    ];

    public sealed class DraftLevel
    {
        public int Nodes;
        public List<(string Name, List<(int From, int To, string Op)> Edges)> Motifs = [];
    }

    public List<DraftLevel> Levels { get; } = [];

    /// <summary>Declared primitives (contract 3.1) in file order: name -> fields (kind and parameters).</summary>
    public List<(string Name, Dictionary<string, object> Fields)> Primitives { get; } = [];

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

    /// <summary>A draft read straight from a genotype document, declared primitives included.</summary>
    public static GenotypeDraft FromJson(string json)
    {
        using var document = JsonDocument.Parse(json);
        var root = document.RootElement;
        var draft = new GenotypeDraft();
        foreach (var level in root.GetProperty("levels").EnumerateArray())
            draft.Levels.Add(new DraftLevel
            {
                Nodes = level.GetProperty("nodes").GetInt32(),
                Motifs = level.GetProperty("motifs").EnumerateObject().Select(m => (m.Name, m.Value.GetProperty("edges").EnumerateArray()
                    .Select(e => (e[0].GetInt32(), e[1].GetInt32(), e[2].GetString()!)).ToList())).ToList(),
            });
        if (root.TryGetProperty("primitives", out var primitives))
            foreach (var declaration in primitives.EnumerateObject())
                draft.Primitives.Add((declaration.Name,
                    declaration.Value.EnumerateObject().ToDictionary(f => f.Name, f => (object)f.Value.Clone())));
        return draft;
    }

    public string ToJson()
    {
        var levels = Levels.Select(l => new
        {
            nodes = l.Nodes,
            motifs = l.Motifs.ToDictionary(m => m.Name, m => new { edges = m.Edges.Select(e => new object[] { e.From, e.To, e.Op }) }),
        });
        return Primitives.Count == 0
            ? JsonSerializer.Serialize(new { format = "genotype/1", levels })
            : JsonSerializer.Serialize(new { format = "genotype/1", primitives = Primitives.ToDictionary(p => p.Name, p => p.Fields), levels });
    }

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

    /// <summary>Renames a declared primitive and every level-0 edge that uses it.</summary>
    public void RenamePrimitive(string from, string to)
    {
        var index = Primitives.FindIndex(p => p.Name == from);
        Primitives[index] = (to, Primitives[index].Fields);
        foreach (var (_, edges) in Levels[0].Motifs)
            for (var e = 0; e < edges.Count; e++)
                if (edges[e].Op == from) edges[e] = (edges[e].From, edges[e].To, to);
    }

    /// <summary>Writes out every parameter a declared primitive leaves to its default (contract 3.1).</summary>
    public void SpellDefaults(string name)
    {
        var fields = Primitives.Single(p => p.Name == name).Fields;
        var kind = fields["kind"] is JsonElement element ? element.GetString()! : (string)fields["kind"];
        foreach (var (parameter, value, kinds) in Defaults)
            if (kinds.Contains(kind) && !fields.ContainsKey(parameter))
                fields[parameter] = value;
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
