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

    /// <summary>Draws the values as little-endian float32 bytes (ONNX raw_data layout).</summary>
    public byte[] Materialize(long seed)
    {
        var bytes = new byte[checked(Elements * sizeof(float))];
        var values = System.Runtime.InteropServices.MemoryMarshal.Cast<byte, float>(bytes.AsSpan());
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
        }
        if (!BitConverter.IsLittleEndian)
            for (var i = 0; i < values.Length; i++)
                values[i] = BitConverter.Int32BitsToSingle(System.Buffers.Binary.BinaryPrimitives.ReverseEndianness(BitConverter.SingleToInt32Bits(values[i])));
        return bytes;
    }
}
