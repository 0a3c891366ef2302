namespace CellCompiler.Onnx;

/// <summary>How an initializer's values are drawn (contract section 3, "Weights").</summary>
internal enum Fill { HeNormal, Uniform, Zeros, Ones }

/// <summary>One weight tensor to emit: its name, shape and fill rule.</summary>
internal sealed record Initializer(string Name, long[] Dims, Fill Fill, double Scale)
{
    public long Elements
    {
        get
        {
            long n = 1;
            foreach (var d in Dims) n *= d;
            return n;
        }
    }

    public long ByteLength => Elements * sizeof(float);

    /// <summary>Draws the values into <paramref name="destination"/> as little-endian float32 (ONNX raw_data layout).</summary>
    public void WriteValues(Span<byte> destination, long seed)
    {
        var values = System.Runtime.InteropServices.MemoryMarshal.Cast<byte, float>(destination);
        switch (Fill)
        {
            case Fill.HeNormal:
                SeededRandom.ForTensor(seed, Name).FillNormal(values, Scale);
                break;
            case Fill.Uniform:
                SeededRandom.ForTensor(seed, Name).FillUniform(values, Scale);
                break;
            case Fill.Ones:
                values.Fill(1f);
                break;
            default:
                values.Clear();
                break;
        }
        if (!BitConverter.IsLittleEndian)
            System.Buffers.Binary.BinaryPrimitives.ReverseEndianness(
                System.Runtime.InteropServices.MemoryMarshal.Cast<float, int>(values),
                System.Runtime.InteropServices.MemoryMarshal.Cast<float, int>(values));
    }

    public byte[] Materialize(long seed)
    {
        var bytes = new byte[checked(ByteLength)];
        WriteValues(bytes, seed);
        return bytes;
    }
}
