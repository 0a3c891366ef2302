using CellCompiler.Input;

namespace CellCompiler.Lowering;

/// <summary>Which edges of one motif survive dead-code removal.</summary>
public sealed record MotifLiveness(Motif Motif, bool OutputIsLive, IReadOnlyList<Edge> LiveEdges, IReadOnlyList<int> DeadNodes);

/// <summary>
/// Dead-code analysis of a genotype (contract section 3), bottom-up: a motif whose output is
/// dead counts as `none` one level up, so liveness depends only on structure, never on channels.
/// </summary>
public sealed class Liveness
{
    private readonly Dictionary<string, MotifLiveness>[] _byLevel;

    private Liveness(Dictionary<string, MotifLiveness>[] byLevel) => _byLevel = byLevel;

    public MotifLiveness Of(int level, string motif) => _byLevel[level][motif];

    public MotifLiveness Cell(Genotype genotype) => Of(genotype.TopLevel, genotype.Cell.Name);

    public static Liveness Analyse(Genotype genotype)
    {
        var byLevel = new Dictionary<string, MotifLiveness>[genotype.Levels.Count];
        for (var k = 0; k < genotype.Levels.Count; k++)
        {
            var level = genotype.Levels[k];
            byLevel[k] = new Dictionary<string, MotifLiveness>(StringComparer.Ordinal);
            foreach (var motif in level.Motifs)
            {
                var below = k == 0 ? null : byLevel[k - 1];
                byLevel[k][motif.Name] = AnalyseMotif(motif, level.Nodes, edge => IsEffective(edge.Op, below));
            }
        }
        return new Liveness(byLevel);
    }

    /// <summary>An edge has an effect unless its op is `none` or a motif whose output is dead.</summary>
    private static bool IsEffective(string op, Dictionary<string, MotifLiveness>? below) =>
        op != Primitives.None && (below is null || Primitives.IsStructural(op) || below[op].OutputIsLive);

    private static MotifLiveness AnalyseMotif(Motif motif, int nodes, Func<Edge, bool> effective)
    {
        var reached = new bool[nodes];
        reached[0] = true;
        // Edges always point forward, so one pass in order of the target node settles reachability.
        foreach (var edge in motif.Edges.Where(effective).OrderBy(e => e.To))
            if (reached[edge.From]) reached[edge.To] = true;

        var feedsOutput = new bool[nodes];
        feedsOutput[nodes - 1] = reached[nodes - 1];
        foreach (var edge in motif.Edges.Where(effective).OrderByDescending(e => e.From))
            if (reached[edge.From] && feedsOutput[edge.To]) feedsOutput[edge.From] = true;

        var live = motif.Edges
            .Where(e => effective(e) && reached[e.From] && feedsOutput[e.To])
            .OrderBy(e => e.To).ThenBy(e => e.From)
            .ToList();
        var dead = Enumerable.Range(1, nodes - 1).Where(j => !(reached[j] && feedsOutput[j])).ToList();
        return new MotifLiveness(motif, reached[nodes - 1], live, dead);
    }
}
