using CellCompiler.Graph;

namespace CellCompiler.Shapes;

/// <summary>A lowered network together with the inferred shape of every tensor.</summary>
public sealed record ShapedNetwork(Network Network, IReadOnlyDictionary<string, TensorShape> Shapes)
{
    public TensorShape this[string tensor] => Shapes[tensor];

    public TensorShape InputShape => Shapes[Network.InputName];

    public TensorShape OutputShape => Shapes[Network.OutputName];

    /// <summary>The shapes of an op's inputs, as its rules take them.</summary>
    public InputShapes InputsOf(NetOp op) => new(op.Inputs, Shapes);
}
