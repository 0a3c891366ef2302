namespace CellCompiler.Graph;

/// <summary>
/// 2-D convolution (ONNX Conv). OutChannels null keeps the input's channel count; Depthwise gives
/// one group per input channel. Pads are symmetric per axis; Bias adds a trainable bias of zeros.
/// </summary>
public sealed record ConvOp(
    string Name, string Input, int KernelH, int KernelW, int Stride, int PadH, int PadW,
    int Dilation, int? OutChannels, bool Depthwise, bool Bias = false)
    : NetOp(Name, [Input])
{
    public override string OnnxType => "Conv";

    public override TensorShape InferShape(InputShapes inputs)
    {
        var x = inputs.First;
        var height = TensorShape.WindowOutput(x.Height, KernelH, Stride, PadH, Dilation);
        var width = TensorShape.WindowOutput(x.Width, KernelW, Stride, PadW, Dilation);
        if (height < 1 || width < 1)
            throw new CompileException($"{Name}: a {KernelH}x{KernelW} window (dilation {Dilation}) does not fit the {x.Height}x{x.Width} input");
        return TensorShape.Image(OutChannels ?? x.Channels, height, width);
    }

    public int Groups(InputShapes inputs) => Depthwise ? inputs.First.Channels : 1;

    /// <summary>Input channels each output channel reads: the weight's second dimension.</summary>
    public int InChannelsPerGroup(InputShapes inputs) => Depthwise ? 1 : inputs.First.Channels;

    public override IReadOnlyList<WeightSpec> Weights(InputShapes inputs, TensorShape output)
    {
        var perGroup = InChannelsPerGroup(inputs);
        // He-normal (contract section 3): std = sqrt(2 / fan_in), fan_in = Cin/group * kH * kW.
        var fanIn = (double)perGroup * KernelH * KernelW;
        var weight = new WeightSpec("weight", [output.Channels, perGroup, KernelH, KernelW], WeightRole.Param, WeightFill.HeNormal, Math.Sqrt(2.0 / fanIn));
        return Bias ? [weight, WeightSpec.Zeros("bias", [output.Channels], WeightRole.Param)] : [weight];
    }

    /// <summary>Cout * Hout * Wout * (Cin / group) * kH * kW (contract section 4); dilation spreads the window but adds no products.</summary>
    public override long Macs(InputShapes inputs, TensorShape output) =>
        output.Elements * InChannelsPerGroup(inputs) * KernelH * KernelW;

    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs)
    {
        var attributes = new List<NodeAttribute>(5)
        {
            new IntsAttribute("kernel_shape", [KernelH, KernelW]),
            new IntsAttribute("strides", [Stride, Stride]),
            new IntsAttribute("pads", [PadH, PadW, PadH, PadW]),
        };
        // Dilation 1 is ONNX's default; writing it only when it differs keeps the built-ins' models as before.
        if (Dilation != 1) attributes.Add(new IntsAttribute("dilations", [Dilation, Dilation]));
        attributes.Add(new IntAttribute("group", Groups(inputs)));
        return attributes;
    }
}
