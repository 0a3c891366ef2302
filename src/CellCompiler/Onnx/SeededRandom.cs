namespace CellCompiler.Onnx;

/// <summary>
/// A small deterministic generator (xoshiro256** seeded through SplitMix64, both published
/// public-domain algorithms) so that weights do not depend on the .NET version's Random.
/// </summary>
public struct SeededRandom
{
    private ulong _s0, _s1, _s2, _s3;

    public SeededRandom(ulong seed)
    {
        _s0 = SplitMix(ref seed);
        _s1 = SplitMix(ref seed);
        _s2 = SplitMix(ref seed);
        _s3 = SplitMix(ref seed);
    }

    /// <summary>An independent stream per tensor: one tensor's weights never shift when another changes.</summary>
    public static SeededRandom ForTensor(long seed, string tensorName)
    {
        var state = (ulong)seed;
        var mixed = SplitMix(ref state) ^ Fnv1a(tensorName);
        return new SeededRandom(mixed);
    }

    public static ulong SplitMix(ref ulong state)
    {
        var z = state += 0x9E3779B97F4A7C15UL;
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }

    private static ulong Fnv1a(string text)
    {
        var hash = 0xCBF29CE484222325UL;
        foreach (var ch in text)
        {
            hash ^= ch;
            hash *= 0x100000001B3UL;
        }
        return hash;
    }

    public ulong NextUInt64()
    {
        var result = ulong.RotateLeft(_s1 * 5, 7) * 9;
        var t = _s1 << 17;
        _s2 ^= _s0;
        _s3 ^= _s1;
        _s1 ^= _s2;
        _s0 ^= _s3;
        _s2 ^= t;
        _s3 = ulong.RotateLeft(_s3, 45);
        return result;
    }

    /// <summary>Uniform in [0, 1) with 53 random bits.</summary>
    public double NextDouble() => (NextUInt64() >> 11) * (1.0 / (1UL << 53));

    /// <summary>Uniform in [0, range) without bias (Lemire's multiply-and-reject method).</summary>
    public ulong Below(ulong range)
    {
        var high = Math.BigMul(NextUInt64(), range, out var low);
        if (low < range)
        {
            var threshold = (0 - range) % range;
            while (low < threshold)
                high = Math.BigMul(NextUInt64(), range, out low);
        }
        return high;
    }

    /// <summary>Fills with N(0, std^2) samples (ziggurat method).</summary>
    public void FillNormal(Span<float> values, double std)
    {
        // The common case of the ziggurat is inlined and kept in float: this loop is most of a full-size compile.
        var accept = NormalZiggurat.Accept;
        var edge = NormalZiggurat.EdgeSingle;
        var scale = (float)std;
        for (var i = 0; i < values.Length; i++)
        {
            var bits = NextUInt64();
            var layer = (int)(bits & NormalZiggurat.LayerMask);
            var u = NormalZiggurat.Fraction(bits);
            if (u < accept[layer])
            {
                // Copy the sign bit (bit 39 of the draw) into the float: a branch here would be mispredicted half the time.
                var magnitude = BitConverter.SingleToUInt32Bits(u * edge[layer] * scale);
                values[i] = BitConverter.UInt32BitsToSingle(magnitude | (uint)((bits >> 8) & 0x8000_0000UL));
            }
            else
            {
                values[i] = (float)(NormalZiggurat.Outside(ref this, layer, u, NormalZiggurat.IsNegative(bits)) * std);
            }
        }
    }

    public void FillUniform(Span<float> values, double bound)
    {
        for (var i = 0; i < values.Length; i++)
            values[i] = (float)((NextDouble() * 2 - 1) * bound);
    }
}
