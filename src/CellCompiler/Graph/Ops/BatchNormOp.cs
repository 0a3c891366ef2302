namespace CellCompiler.Graph;

/// <summary>BatchNormalization in inference form: scale 1, bias 0, running mean 0, running variance 1 (contract section 3).</summary>
public sealed record BatchNormOp(string Name, string Input) : NetOp(Name, [Input])
{
    public const float Epsilon = 1e-5f;
    public const float Momentum = 0.9f;

    public override string OnnxType => "BatchNormalization";

    public override TensorShape InferShape(InputShapes inputs) => inputs.First;

    public override IReadOnlyList<WeightSpec> Weights(InputShapes inputs, TensorShape output)
    {
        long[] channels = [output.Channels];
        return
        [
            WeightSpec.Ones("scale", channels, WeightRole.Param),
            WeightSpec.Zeros("bias", channels, WeightRole.Param),
            WeightSpec.Zeros("mean", channels, WeightRole.Buffer),
            WeightSpec.Ones("var", channels, WeightRole.Buffer),
        ];
    }

    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) =>
        [new FloatAttribute("epsilon", Epsilon), new FloatAttribute("momentum", Momentum)];
}
