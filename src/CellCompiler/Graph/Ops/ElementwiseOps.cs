namespace CellCompiler.Graph;

/// <summary>Relu: max(x, 0).</summary>
public sealed record ReluOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "Relu";
    public override TensorShape InferShape(InputShapes inputs) => inputs.First;
}

/// <summary>Sigmoid: 1 / (1 + exp(-x)).</summary>
public sealed record SigmoidOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "Sigmoid";
    public override TensorShape InferShape(InputShapes inputs) => inputs.First;
}

/// <summary>HardSwish (opset 14 and later): x * max(0, min(1, x / 6 + 0.5)).</summary>
public sealed record HardSwishOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "HardSwish";
    public override TensorShape InferShape(InputShapes inputs) => inputs.First;
}

/// <summary>HardSigmoid: max(0, min(1, alpha * x + beta)).</summary>
public sealed record HardSigmoidOp(string Name, string Input, float Alpha, float Beta) : NetOp(Name, [Input])
{
    public override string OnnxType => "HardSigmoid";
    public override TensorShape InferShape(InputShapes inputs) => inputs.First;
    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) =>
        [new FloatAttribute("alpha", Alpha), new FloatAttribute("beta", Beta)];
}

/// <summary>Clip to [Min, Max], the bounds given as scalar constant initializers (ONNX Clip since opset 11).</summary>
public sealed record ClipOp(string Name, string Input, float Min, float Max) : NetOp(Name, [Input])
{
    public override string OnnxType => "Clip";
    public override TensorShape InferShape(InputShapes inputs) => inputs.First;

    /// <summary>Constants, counted in neither params nor buffers (contract section 3.1).</summary>
    public override IReadOnlyList<WeightSpec> Weights(InputShapes inputs, TensorShape output) =>
    [
        new WeightSpec("min", [], WeightRole.Constant, WeightFill.Constant, Min),
        new WeightSpec("max", [], WeightRole.Constant, WeightFill.Constant, Max),
    ];
}

/// <summary>
/// Elementwise product of two tensors of the same channels; one of them may be [C, 1, 1] and is
/// broadcast over height and width (the squeeze-excitation gate).
/// </summary>
public sealed record MulOp(string Name, string Left, string Right) : NetOp(Name, [Left, Right])
{
    public override string OnnxType => "Mul";

    public override TensorShape InferShape(InputShapes inputs)
    {
        var (a, b) = (inputs[0], inputs[1]);
        if (a == b) return a;
        if (a.Channels == b.Channels && !a.IsFlat && !b.IsFlat)
        {
            if (b.Height == 1 && b.Width == 1) return a;
            if (a.Height == 1 && a.Width == 1) return b;
        }
        throw new CompileException($"{Name}: cannot multiply {a} by {b}");
    }
}
