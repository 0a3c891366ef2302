using CellCompiler.Graph;

namespace CellCompiler.Shapes;

/// <summary>Infers every tensor's shape by walking the ops in order (they are topologically sorted), each by its own rule.</summary>
public static class ShapeInference
{
    public static ShapedNetwork Infer(Network network)
    {
        var shapes = new Dictionary<string, TensorShape>(network.Ops.Count + 1, StringComparer.Ordinal)
        {
            [network.InputName] = TensorShape.Image(network.Input.Channels, network.Input.Height, network.Input.Width),
        };
        foreach (var op in network.Ops)
            shapes[op.Output] = op.InferShape(new InputShapes(op.Inputs, shapes));
        return new ShapedNetwork(network, shapes);
    }
}
