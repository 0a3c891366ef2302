using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Lowering;

/// <summary>Expands one copy of the cell: the motif hierarchy, its primitives and its merges.</summary>
internal sealed class CellContext(Genotype genotype, Liveness liveness, MergeMode merge, int channels, NetworkBuilder builder)
{
    private readonly string _mergeName = MacroLayers.MergeName(merge);

    /// <summary>Lowers motif <paramref name="name"/> of level <paramref name="level"/> applied to tensor <paramref name="input"/>.</summary>
    public string LowerMotif(int level, string name, string input, NodePath path)
    {
        var info = liveness.Of(level, name);
        var nodes = genotype.Levels[level].Nodes;
        var tensors = new string?[nodes];
        tensors[0] = input;
        var inbound = new List<string>();
        var edgeIndex = 0;
        var live = info.LiveEdges; // sorted by target, then source
        for (var j = 1; j < nodes; j++)
        {
            inbound.Clear();
            while (edgeIndex < live.Count && live[edgeIndex].To == j)
            {
                var edge = live[edgeIndex++];
                inbound.Add(Apply(level, edge, tensors[edge.From]!, path.Edge(edge.Index, edge.Op)));
            }
            tensors[j] = inbound.Count switch
            {
                0 => null,
                1 => inbound[0],
                _ => MacroLayers.Merge(builder.At(path.Merge(j, _mergeName), channels), merge, inbound),
            };
        }
        return tensors[nodes - 1]!;
    }

    private string Apply(int level, Edge edge, string input, NodePath path)
    {
        if (edge.Op == Primitives.Identity) return input;
        if (level > 0) return LowerMotif(level - 1, edge.Op, input, path);
        return genotype.Primitives.Get(edge.Op).Lower(builder.At(path, channels), input);
    }
}
