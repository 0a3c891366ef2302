using CellCompiler.Input;
using CellCompiler.Lowering;

namespace CellCompiler.Shapes;

/// <summary>Infers every tensor's shape by walking the ops in order (they are topologically sorted).</summary>
public static class ShapeInference
{
    /// <summary>Output side of a convolution or pooling window: floor((in + 2*pad - kernel) / stride) + 1, from the ONNX Conv specification.</summary>
    public static int WindowOutput(int size, int kernel, int stride, int pad) => (size + 2 * pad - kernel) / stride + 1;

    public static ShapedNetwork Infer(Network network)
    {
        var shapes = new Dictionary<string, TensorShape>(network.Ops.Count + 1, StringComparer.Ordinal)
        {
            [network.InputName] = TensorShape.Image(network.Input.Channels, network.Input.Height, network.Input.Width),
        };
        foreach (var op in network.Ops)
            shapes[op.Output] = Infer(op, shapes);
        return new ShapedNetwork(network, shapes);
    }

    private static TensorShape Infer(NetOp op, Dictionary<string, TensorShape> shapes)
    {
        var x = shapes[op.Inputs[0]];
        switch (op)
        {
            case ConvOp conv:
                return Window(x, conv.OutChannels ?? x.Channels, conv.Kernel, conv.Stride, conv.Pad);
            case MaxPoolOp pool:
                return Window(x, x.Channels, pool.Kernel, pool.Stride, pool.Pad);
            case AveragePoolOp pool:
                return Window(x, x.Channels, pool.Kernel, pool.Stride, pool.Pad);
            case BatchNormOp or ReluOp:
                return x;
            case ConcatOp concat:
            {
                var channels = 0;
                foreach (var part in concat.Inputs)
                {
                    var shape = shapes[part];
                    if (shape.Height != x.Height || shape.Width != x.Width)
                        throw new CompileException($"{op.Name}: concatenated tensors differ in height or width");
                    channels += shape.Channels;
                }
                return x with { Channels = channels };
            }
            case SumOp sum:
                foreach (var term in sum.Inputs)
                    if (shapes[term] != x)
                        throw new CompileException(
                            $"{op.Name}: merge 'sum' needs equal shapes, but {sum.Inputs[0]} is {x} and {term} is {shapes[term]}");
                return x;
            case GlobalAveragePoolOp:
                return TensorShape.Image(x.Channels, 1, 1);
            case FlattenOp:
                return TensorShape.Vector(checked((int)x.Elements));
            case GemmOp gemm:
                return TensorShape.Vector(gemm.OutFeatures);
            default:
                throw new InvalidOperationException($"no shape rule for {op.GetType().Name}");
        }
    }

    private static TensorShape Window(TensorShape x, int outChannels, int kernel, int stride, int pad) =>
        TensorShape.Image(outChannels, WindowOutput(x.Height, kernel, stride, pad), WindowOutput(x.Width, kernel, stride, pad));
}
