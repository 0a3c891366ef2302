using CellCompiler.Input;
using CellCompiler.Lowering;

namespace CellCompiler.Hashing;

/// <summary>
/// Expands a live cell into its <see cref="LayerGraph"/> following the lowering rules of contract
/// section 3: motifs inlined, dead code left out (the same <see cref="Liveness"/> the lowering uses),
/// an identity op or a node with one live input is the same tensor, a node with several live inputs
/// is a merge. A concat merge is a concat join followed by the 1x1 projection, expanded through the
/// same seam as the primitives (<see cref="IPrimitiveExpander.ConcatMerge"/>). Under sum
/// merges a term that is itself a sum is replaced by its terms, always.
/// </summary>
internal sealed class CellExpansion
{
    public const string ConcatLabel = "concat";
    public const string SumLabel = "sum";

    private readonly Genotype _genotype;
    private readonly Liveness _liveness;
    private readonly MergeMode _merge;
    private readonly IPrimitiveExpander _expander;
    private readonly LayerGraph _graph = new();
    // Terms of each flattened sum node, for sum merges.
    private readonly Dictionary<int, int[]> _sumTerms = [];

    private CellExpansion(Genotype genotype, Liveness liveness, MergeMode merge, IPrimitiveExpander expander)
    {
        _genotype = genotype;
        _liveness = liveness;
        _merge = merge;
        _expander = expander;
    }

    /// <summary>The expanded cell; the caller has checked that the cell's output is live.</summary>
    public static LayerGraph Expand(Genotype genotype, Liveness liveness, MergeMode merge, IPrimitiveExpander expander)
    {
        var expansion = new CellExpansion(genotype, liveness, merge, expander);
        var graph = expansion._graph;
        graph.Output = expansion.ExpandMotif(genotype.TopLevel, genotype.Cell.Name, LayerGraph.Input);
        return graph;
    }

    private int ExpandMotif(int level, string name, int input)
    {
        var info = _liveness.Of(level, name);
        var nodes = _genotype.Levels[level].Nodes;
        var tensors = new int[nodes];
        tensors[0] = input;
        var inbound = new List<int>();
        var live = info.LiveEdges; // sorted by target, then source
        var next = 0;
        for (var j = 1; j < nodes; j++)
        {
            inbound.Clear();
            while (next < live.Count && live[next].To == j)
            {
                var edge = live[next++];
                inbound.Add(Apply(level, edge.Op, tensors[edge.From]));
            }
            tensors[j] = inbound.Count switch
            {
                0 => -1,
                1 => inbound[0],
                _ => Merge(inbound),
            };
        }
        return tensors[nodes - 1];
    }

    private int Apply(int level, string op, int input)
    {
        if (op == Primitives.Identity) return input;
        if (level > 0) return ExpandMotif(level - 1, op, input);
        return _expander.Expand(_graph, op, input);
    }

    private int Merge(List<int> inputs)
    {
        if (_merge == MergeMode.Concat)
            return _expander.ConcatMerge(_graph, inputs);

        var terms = new List<int>(inputs.Count);
        foreach (var input in inputs)
        {
            if (_sumTerms.TryGetValue(input, out var inner)) terms.AddRange(inner);
            else terms.Add(input);
        }
        var sum = _graph.AddJoin(SumLabel, terms);
        _sumTerms[sum] = [.. terms];
        return sum;
    }
}
