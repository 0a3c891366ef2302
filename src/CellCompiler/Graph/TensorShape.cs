namespace CellCompiler.Graph;

/// <summary>A tensor's shape for one sample (the batch dimension N is left out).</summary>
public readonly record struct TensorShape(int Channels, int Height, int Width, bool IsFlat = false)
{
    public static TensorShape Image(int channels, int height, int width) => new(channels, height, width);

    public static TensorShape Vector(int length) => new(length, 1, 1, IsFlat: true);

    public long Elements => (long)Channels * Height * Width;

    /// <summary>The dimensions after N: [C, H, W] for images, [C] for vectors.</summary>
    public int[] Dims => IsFlat ? [Channels] : [Channels, Height, Width];

    public override string ToString() => IsFlat ? $"[N, {Channels}]" : $"[N, {Channels}, {Height}, {Width}]";

    /// <summary>
    /// Output side of a convolution or pooling window, from the ONNX Conv specification:
    /// floor((in + 2 * pad - dilation * (kernel - 1) - 1) / stride) + 1.
    /// </summary>
    public static int WindowOutput(int size, int kernel, int stride, int pad, int dilation = 1) =>
        (size + 2 * pad - dilation * (kernel - 1) - 1) / stride + 1;
}
