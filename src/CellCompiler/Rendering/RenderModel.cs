using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Vocabulary;

namespace CellCompiler.Rendering;

/// <summary>One node of a drawn motif: its index, whether it is dead, and whether it merges ≥2 live inputs.</summary>
public sealed record RenderNode(int Index, bool IsInput, bool IsOutput, bool IsDead, bool IsMerge, int LiveInputs);

/// <summary>One drawn edge (never a `none` edge); dead when dead-code removal drops it; drawn in its op's line family.</summary>
public sealed record RenderEdge(Edge Edge, bool IsDead, LineFamily Family);

/// <summary>A primitive the genotype declares (contract 3.1), for the legend; <paramref name="Drawn"/> when an edge of a drawn panel applies it.</summary>
public sealed record DeclaredPrimitive(string Name, PrimitiveDefinition Definition, bool Drawn)
{
    public LineFamily Family => LineFamilies.Of(Definition.Kind.Family);
}

/// <summary>One motif to draw: the cell or a used motif.</summary>
public sealed record RenderPanel(
    Motif Motif, int Level, bool IsCell, bool OutputIsLive,
    IReadOnlyList<RenderNode> Nodes, IReadOnlyList<RenderEdge> Edges,
    IReadOnlyList<(string User, int Count)> UsedBy)
{
    public int LiveEdgeCount => Edges.Count(e => !e.IsDead);

    /// <summary>"cell" for the usual name, else "cell NAME"; a motif by its name.</summary>
    public string DisplayName => !IsCell ? Motif.Name : Motif.Name == "cell" ? "cell" : $"cell {Motif.Name}";
}

/// <summary>A motif that is not drawn and why.</summary>
public sealed record OmittedMotif(string Name, int Level, bool IsDead);

/// <summary>
/// What a picture of a genotype shows, independent of the output format: the cell and every
/// motif it reaches through live edges (cell first, then level by level downwards, each level in
/// file order), and the motifs left out (unused, or dead and so acting as `none`).
/// </summary>
public sealed record RenderModel(string GenotypeName, int LevelCount, bool CellIsLive,
    IReadOnlyList<RenderPanel> Panels, IReadOnlyList<OmittedMotif> Omitted, IReadOnlyList<DeclaredPrimitive> Declared)
{
    /// <summary>The line families drawn, in the table's order (for the legend).</summary>
    public IReadOnlyList<LineFamily> Families =>
        LineFamilies.All.Where(f => Panels.Any(p => p.Edges.Any(e => e.Family == f))).ToList();

    public bool HasDead => Panels.Any(p => p.Edges.Any(e => e.IsDead) || p.Nodes.Any(n => n.IsDead));

    public bool HasMerge => Panels.Any(p => p.Nodes.Any(n => n.IsMerge));

    public static RenderModel Build(Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        var used = UsedMotifs(genotype, liveness);

        var panels = new List<RenderPanel>();
        var omitted = new List<OmittedMotif>();
        for (var k = genotype.TopLevel; k >= 0; k--)
        {
            var level = genotype.Levels[k];
            foreach (var motif in level.Motifs)
            {
                var info = liveness.Of(k, motif.Name);
                if (used[k].TryGetValue(motif.Name, out var users))
                    panels.Add(Panel(motif, k, k == genotype.TopLevel, level.Nodes, info, liveness, users, genotype.Primitives));
                else
                    omitted.Add(new OmittedMotif(motif.Name, k, !info.OutputIsLive));
            }
        }
        var drawnOps = panels.Where(p => p.Level == 0).SelectMany(p => p.Edges).Select(e => e.Edge.Op).ToHashSet(StringComparer.Ordinal);
        var declared = genotype.Primitives.Declared
            .Select(d => new DeclaredPrimitive(d.Name, d.Definition, drawnOps.Contains(d.Name))).ToList();
        return new RenderModel(genotype.Name, genotype.Levels.Count, liveness.Cell(genotype).OutputIsLive, panels, omitted, declared);
    }

    /// <summary>
    /// Per level, the motifs reached from the cell through live edges, each with the drawn motifs
    /// that apply it and how often (the walk of the hasher's UsedMotifs).
    /// </summary>
    private static Dictionary<string, List<(string, int)>>[] UsedMotifs(Genotype genotype, Liveness liveness)
    {
        var used = new Dictionary<string, List<(string, int)>>[genotype.Levels.Count];
        used[genotype.TopLevel] = new(StringComparer.Ordinal) { [genotype.Cell.Name] = [] };
        for (var k = genotype.TopLevel; k > 0; k--)
        {
            used[k - 1] = new(StringComparer.Ordinal);
            foreach (var motif in genotype.Levels[k].Motifs)
            {
                if (!used[k].ContainsKey(motif.Name)) continue;
                var counts = liveness.Of(k, motif.Name).LiveEdges
                    .Where(e => !Primitives.IsStructural(e.Op))
                    .GroupBy(e => e.Op, StringComparer.Ordinal);
                foreach (var group in counts)
                {
                    if (!used[k - 1].TryGetValue(group.Key, out var users))
                        used[k - 1][group.Key] = users = [];
                    users.Add((motif.Name, group.Count()));
                }
            }
        }
        return used;
    }

    private static RenderPanel Panel(Motif motif, int level, bool isCell, int nodeCount, MotifLiveness info,
        Liveness liveness, List<(string, int)> users, PrimitiveTable primitives)
    {
        var live = new HashSet<int>(info.LiveEdges.Select(e => e.Index));
        var deadNodes = new HashSet<int>(info.DeadNodes);
        // A dead cell's input feeds nothing either: fade it with the rest.
        if (!info.OutputIsLive) deadNodes.Add(0);

        var liveInputs = new int[nodeCount];
        foreach (var edge in info.LiveEdges) liveInputs[edge.To]++;

        var nodes = Enumerable.Range(0, nodeCount)
            .Select(i => new RenderNode(i, i == 0, i == nodeCount - 1, deadNodes.Contains(i), liveInputs[i] >= 2, liveInputs[i]))
            .ToList();
        var edges = motif.Edges
            .Where(e => e.Op != Primitives.None)
            .OrderBy(e => e.From).ThenBy(e => e.To)
            .Select(e => new RenderEdge(e, !live.Contains(e.Index), Family(e.Op, level, primitives)))
            .ToList();
        return new RenderPanel(motif, level, isCell, info.OutputIsLive, nodes, edges, users);
    }

    private static LineFamily Family(string op, int level, PrimitiveTable primitives) => op switch
    {
        Primitives.Identity => LineFamily.Identity,
        _ when level > 0 => LineFamily.Motif,
        _ => LineFamilies.Of(primitives.Get(op).Kind.Family),
    };
}
