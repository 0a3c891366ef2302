namespace CellCompiler.Vocabulary;

/// <summary>
/// A channel count, kept symbolic so that one lowering serves every width and the hash stays
/// independent of the skeleton. Inside a cell every tensor has the cell's C channels, so the
/// primitive's input channel count Cin is C.
/// </summary>
public abstract record ChannelSize
{
    private ChannelSize() { }

    /// <summary>C, the cell's channel count.</summary>
    public sealed record Cell : ChannelSize
    {
        public static readonly Cell Instance = new();
        public override string ToString() => "C";
    }

    /// <summary>Factor * Cin (an inverted bottleneck's expansion E).</summary>
    public sealed record Expanded(int Factor) : ChannelSize
    {
        public override string ToString() => $"{Factor}Cin";
    }

    /// <summary>max(1, floor(Cin * Ratio)) (a squeeze-excitation's reduction R).</summary>
    public sealed record Squeezed(decimal Ratio) : ChannelSize
    {
        public override string ToString() => $"R({Ratio.ToString(System.Globalization.CultureInfo.InvariantCulture)})";
    }

    /// <summary>A fixed count (stem, reductions: the next stage's channels).</summary>
    public sealed record Fixed(int Channels) : ChannelSize
    {
        public override string ToString() => Channels.ToString(System.Globalization.CultureInfo.InvariantCulture);
    }

    /// <summary>The concrete count for a primitive whose input has <paramref name="inputChannels"/> channels in a cell of <paramref name="cellChannels"/>.</summary>
    public int Resolve(int cellChannels, int inputChannels) => this switch
    {
        Cell => cellChannels,
        Expanded e => checked(e.Factor * inputChannels),
        Squeezed s => (int)Math.Max(1, decimal.Floor(inputChannels * s.Ratio)),
        Fixed f => f.Channels,
        _ => throw new InvalidOperationException($"unknown channel size {GetType().Name}"),
    };
}

/// <summary>
/// One convolution: a KernelH x KernelW window, dilation, "same" padding p = dilation * (k - 1) / 2
/// per axis, and either full (to <see cref="Out"/> channels) or depthwise (one group per input
/// channel, channels kept).
/// </summary>
public sealed record ConvLayer(int KernelH, int KernelW, ChannelSize? Out, bool Depthwise = false, int Dilation = 1, bool Bias = false, int Stride = 1)
{
    public static ConvLayer Square(int kernel, ChannelSize output, int dilation = 1, int stride = 1) => new(kernel, kernel, output, false, dilation, false, stride);

    public static ConvLayer DepthwiseSquare(int kernel, int dilation = 1, int stride = 1) => new(kernel, kernel, null, true, dilation, false, stride);

    public static ConvLayer Pointwise(ChannelSize output, bool bias = false) => new(1, 1, output, false, 1, bias);

    public int PadH => Dilation * (KernelH - 1) / 2;
    public int PadW => Dilation * (KernelW - 1) / 2;
}

public enum PoolKind { Max, Average }

/// <summary>A square pooling window with "same" padding (kernel - 1) / 2; average pooling excludes padding.</summary>
public sealed record PoolLayer(PoolKind Kind, int Kernel, int Stride = 1)
{
    public int Pad => (Kernel - 1) / 2;
}
