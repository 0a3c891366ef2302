namespace CellCompiler.Graph;

/// <summary>Max pooling over a square window.</summary>
public sealed record MaxPoolOp(string Name, string Input, int Kernel, int Stride, int Pad) : NetOp(Name, [Input])
{
    public override string OnnxType => "MaxPool";
    public override TensorShape InferShape(InputShapes inputs) => PoolWindow.Shape(this, inputs.First, Kernel, Stride, Pad);
    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) => PoolWindow.Attributes(Kernel, Stride, Pad);
}

/// <summary>Average pooling that excludes padding from the divisor (count_include_pad 0).</summary>
public sealed record AveragePoolOp(string Name, string Input, int Kernel, int Stride, int Pad) : NetOp(Name, [Input])
{
    public override string OnnxType => "AveragePool";
    public override TensorShape InferShape(InputShapes inputs) => PoolWindow.Shape(this, inputs.First, Kernel, Stride, Pad);
    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) =>
        [.. PoolWindow.Attributes(Kernel, Stride, Pad), new IntAttribute("count_include_pad", 0)];
}

/// <summary>Mean over height and width: [C, H, W] to [C, 1, 1].</summary>
public sealed record GlobalAveragePoolOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "GlobalAveragePool";
    public override TensorShape InferShape(InputShapes inputs) => TensorShape.Image(inputs.First.Channels, 1, 1);
}

/// <summary>The window rule pooling ops share.</summary>
internal static class PoolWindow
{
    public static TensorShape Shape(NetOp op, TensorShape x, int kernel, int stride, int pad)
    {
        var height = TensorShape.WindowOutput(x.Height, kernel, stride, pad);
        var width = TensorShape.WindowOutput(x.Width, kernel, stride, pad);
        if (height < 1 || width < 1)
            throw new CompileException($"{op.Name}: a {kernel}x{kernel} window does not fit the {x.Height}x{x.Width} input");
        return TensorShape.Image(x.Channels, height, width);
    }

    public static NodeAttribute[] Attributes(int kernel, int stride, int pad) =>
    [
        new IntsAttribute("kernel_shape", [kernel, kernel]),
        new IntsAttribute("strides", [stride, stride]),
        new IntsAttribute("pads", [pad, pad, pad, pad]),
    ];
}
