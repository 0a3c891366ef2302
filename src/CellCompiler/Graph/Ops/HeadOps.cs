namespace CellCompiler.Graph;

/// <summary>Flatten at axis 1: [N, C, H, W] to [N, C * H * W].</summary>
public sealed record FlattenOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "Flatten";

    public override TensorShape InferShape(InputShapes inputs)
    {
        var elements = inputs.First.Elements;
        if (elements > int.MaxValue) throw new CompileException($"{Name}: {elements:N0} features are too many to flatten");
        return TensorShape.Vector((int)elements);
    }

    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) => [new IntAttribute("axis", 1)];
}

/// <summary>Fully connected layer with bias (Gemm, transB = 1).</summary>
public sealed record GemmOp(string Name, string Input, int OutFeatures) : NetOp(Name, [Input])
{
    public override string OnnxType => "Gemm";

    public override TensorShape InferShape(InputShapes inputs) => TensorShape.Vector(OutFeatures);

    /// <summary>Weight uniform in +-1/sqrt(in), bias 0 (contract section 3).</summary>
    public override IReadOnlyList<WeightSpec> Weights(InputShapes inputs, TensorShape output)
    {
        long inFeatures = inputs.First.Channels;
        return
        [
            new WeightSpec("weight", [OutFeatures, inFeatures], WeightRole.Param, WeightFill.Uniform, 1.0 / Math.Sqrt(inFeatures)),
            WeightSpec.Zeros("bias", [OutFeatures], WeightRole.Param),
        ];
    }

    /// <summary>in * out (contract section 4).</summary>
    public override long Macs(InputShapes inputs, TensorShape output) => (long)inputs.First.Channels * OutFeatures;

    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) => [new IntAttribute("transB", 1)];
}
