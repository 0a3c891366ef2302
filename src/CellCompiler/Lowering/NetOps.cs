namespace CellCompiler.Lowering;

/// <summary>
/// One op of our network representation: a typed node reading named tensors and writing one.
/// Channel counts that depend on the input are left to shape inference.
/// </summary>
public abstract record NetOp(string Name, IReadOnlyList<string> Inputs)
{
    /// <summary>Set only where a tensor needs a fixed name (the graph output).</summary>
    public string? OutputName { get; init; }

    /// <summary>Each op writes exactly one tensor, by default named after the op so names stay unique and traceable.</summary>
    public string Output => OutputName ?? Name;

    /// <summary>The ONNX operator this op is emitted as.</summary>
    public abstract string OnnxType { get; }
}

/// <summary>2-D convolution without bias. OutChannels null keeps the input's channel count (depthwise).</summary>
public sealed record ConvOp(string Name, string Input, int Kernel, int Stride, int Pad, int? OutChannels, bool Depthwise)
    : NetOp(Name, [Input])
{
    public override string OnnxType => "Conv";
}

public sealed record BatchNormOp(string Name, string Input) : NetOp(Name, [Input])
{
    public const float Epsilon = 1e-5f;
    public const float Momentum = 0.9f;
    public override string OnnxType => "BatchNormalization";
}

public sealed record ReluOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "Relu";
}

public sealed record MaxPoolOp(string Name, string Input, int Kernel, int Stride, int Pad) : NetOp(Name, [Input])
{
    public override string OnnxType => "MaxPool";
}

/// <summary>Average pooling that excludes padding from the divisor (count_include_pad 0).</summary>
public sealed record AveragePoolOp(string Name, string Input, int Kernel, int Stride, int Pad) : NetOp(Name, [Input])
{
    public override string OnnxType => "AveragePool";
}

/// <summary>Concatenation along the channel axis.</summary>
public sealed record ConcatOp(string Name, IReadOnlyList<string> Parts) : NetOp(Name, Parts)
{
    public override string OnnxType => "Concat";
}

public sealed record SumOp(string Name, IReadOnlyList<string> Terms) : NetOp(Name, Terms)
{
    public override string OnnxType => "Sum";
}

public sealed record GlobalAveragePoolOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "GlobalAveragePool";
}

/// <summary>Flatten at axis 1: [N, C, 1, 1] to [N, C].</summary>
public sealed record FlattenOp(string Name, string Input) : NetOp(Name, [Input])
{
    public override string OnnxType => "Flatten";
}

/// <summary>Fully connected layer with bias (Gemm, transB = 1).</summary>
public sealed record GemmOp(string Name, string Input, int OutFeatures) : NetOp(Name, [Input])
{
    public override string OnnxType => "Gemm";
}
