namespace CellCompiler.Hashing;

/// <summary>
/// The one seam through which the hash learns what a level-0 primitive is made of: it adds the
/// primitive's layers to the graph on top of <paramref name="input"/> and returns the node holding
/// the result. Two primitives whose expansions are the same layers hash the same; an expansion must
/// therefore describe each layer fully (kind and every parameter that changes the computation).
/// The compiler's expander is <see cref="LayerExpander"/>.
/// </summary>
public interface IPrimitiveExpander
{
    int Expand(LayerGraph graph, string op, int input);

    /// <summary>A concat merge: the join of its inputs (a multiset) and the 1x1 projection after it.</summary>
    int ConcatMerge(LayerGraph graph, IReadOnlyList<int> inputs) =>
        Expand(graph, Input.Primitives.Conv1x1, graph.AddJoin(CellExpansion.ConcatLabel, inputs));
}
