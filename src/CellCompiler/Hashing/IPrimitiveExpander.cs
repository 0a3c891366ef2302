using CellCompiler.Input;

namespace CellCompiler.Hashing;

/// <summary>
/// The one seam through which the hash learns what a level-0 primitive is made of: it adds the
/// primitive's layers to the graph on top of <paramref name="input"/> and returns the node holding
/// the result. Two primitives whose expansions are the same layers hash the same; an expansion must
/// therefore describe each layer fully (kind and every parameter that changes the computation).
/// </summary>
public interface IPrimitiveExpander
{
    int Expand(LayerGraph graph, string op, int input);
}

/// <summary>
/// Today's eight built-ins (contract section 3), each as one node labelled by its name. Exact for
/// them: no built-in lowers to a chain of the others, so one node per op distinguishes the same
/// networks as their full layer lists would. `identity` adds nothing; `none` never reaches here.
/// </summary>
public sealed class BuiltinPrimitiveExpander : IPrimitiveExpander
{
    public static BuiltinPrimitiveExpander Instance { get; } = new();

    public int Expand(LayerGraph graph, string op, int input) => op switch
    {
        Primitives.Identity => input,
        Primitives.Conv1x1 or Primitives.Conv3x3 or Primitives.DwConv3x3 or Primitives.SepConv3x3
            or Primitives.MaxPool3x3 or Primitives.AvgPool3x3 => graph.AddLayer(op, input),
        _ => throw new InvalidOperationException($"primitive '{op}' has no expansion for the hash"),
    };
}
