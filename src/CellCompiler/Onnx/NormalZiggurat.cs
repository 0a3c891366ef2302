namespace CellCompiler.Onnx;

/// <summary>
/// Standard normal samples by the ziggurat method (Marsaglia and Tsang, 2000), with 128 layers.
/// Almost every sample costs one 64-bit draw, a table look-up and a float multiply, which is what
/// keeps weight generation for full-size networks fast. From each draw: the low 7 bits pick the
/// layer, bit 39 the sign, the top 23 bits a uniform fraction of the layer's width.
/// </summary>
internal static class NormalZiggurat
{
    private const int Layers = 128;
    public const int LayerMask = Layers - 1;
    private const double TailStart = 3.442619855899;        // r: where the base strip's tail begins (published constant)
    private const double LayerArea = 9.91256303526217e-3;   // v: area of each layer (published constant)

    /// <summary>Right edge of each layer (for layer 0, the base strip, the width of an equal-area rectangle).</summary>
    internal static readonly double[] Edge = new double[Layers];
    internal static readonly float[] EdgeSingle = new float[Layers];
    /// <summary>Fraction of a layer's width that lies wholly under the density: below it a sample is accepted at once.</summary>
    internal static readonly float[] Accept = new float[Layers];
    /// <summary>Density at each layer's edge.</summary>
    private static readonly double[] Height = new double[Layers];

    static NormalZiggurat()
    {
        var x = TailStart;
        var q = LayerArea / Math.Exp(-0.5 * x * x);
        Edge[0] = q;
        Accept[0] = (float)(x / q);
        Edge[Layers - 1] = x;
        Height[0] = 1.0;
        Height[Layers - 1] = Math.Exp(-0.5 * x * x);
        for (var i = Layers - 2; i >= 1; i--)
        {
            var inner = Math.Sqrt(-2.0 * Math.Log(LayerArea / x + Math.Exp(-0.5 * x * x)));
            Accept[i + 1] = (float)(inner / x);
            x = inner;
            Edge[i] = x;
            Height[i] = Math.Exp(-0.5 * x * x);
        }
        Accept[1] = 0; // the top layer is all wedge
        for (var i = 0; i < Layers; i++) EdgeSingle[i] = (float)Edge[i];
    }

    /// <summary>Uniform in [0, 1) from the top 23 bits, exactly representable as a float.</summary>
    public static float Fraction(ulong bits) => BitConverter.Int32BitsToSingle(0x3F800000 | (int)(bits >> 41)) - 1f;

    public static bool IsNegative(ulong bits) => (bits & (1UL << 39)) != 0;

    public static double Next(ref SeededRandom random)
    {
        var bits = random.NextUInt64();
        var layer = (int)(bits & LayerMask);
        var u = Fraction(bits);
        if (u < Accept[layer])
        {
            var x = u * EdgeSingle[layer];
            return IsNegative(bits) ? -x : x;
        }
        return Outside(ref random, layer, u, IsNegative(bits));
    }

    /// <summary>The rare case (under 3% of draws): a wedge or the tail, with rejection and redraws.</summary>
    public static double Outside(ref SeededRandom random, int layer, float u, bool negative)
    {
        while (true)
        {
            if (layer == 0) return Tail(ref random, negative);
            double x = u * EdgeSingle[layer];
            // Wedge between the rectangle and the curve: accept under the density.
            var y = Height[layer] + random.NextDouble() * (Height[layer - 1] - Height[layer]);
            if (y < Math.Exp(-0.5 * x * x)) return negative ? -x : x;

            var bits = random.NextUInt64();
            layer = (int)(bits & LayerMask);
            u = Fraction(bits);
            negative = IsNegative(bits);
            if (u < Accept[layer])
            {
                x = u * EdgeSingle[layer];
                return negative ? -x : x;
            }
        }
    }

    /// <summary>Samples beyond r by Marsaglia's exponential rejection.</summary>
    private static double Tail(ref SeededRandom random, bool negative)
    {
        double x, y;
        do
        {
            x = -Math.Log(1.0 - random.NextDouble()) / TailStart;
            y = -Math.Log(1.0 - random.NextDouble());
        } while (y + y < x * x);
        return negative ? -(TailStart + x) : TailStart + x;
    }
}
