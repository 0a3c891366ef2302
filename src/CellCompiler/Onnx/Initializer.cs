using CellCompiler.Graph;

namespace CellCompiler.Onnx;

/// <summary>One weight tensor to emit: its full name and how its values are drawn.</summary>
internal sealed record Initializer(string Name, WeightSpec Spec)
{
    public long[] Dims => Spec.Dims;

    public long Elements => Spec.Elements;

    public long ByteLength => Elements * sizeof(float);

    /// <summary>Draws the values into <paramref name="destination"/> as little-endian float32 (ONNX raw_data layout).</summary>
    public void WriteValues(Span<byte> destination, long seed)
    {
        var values = System.Runtime.InteropServices.MemoryMarshal.Cast<byte, float>(destination);
        switch (Spec.Fill)
        {
            case WeightFill.HeNormal:
                SeededRandom.ForTensor(seed, Name).FillNormal(values, Spec.Value);
                break;
            case WeightFill.Uniform:
                SeededRandom.ForTensor(seed, Name).FillUniform(values, Spec.Value);
                break;
            case WeightFill.Constant:
                values.Fill((float)Spec.Value);
                break;
            default:
                throw new InvalidOperationException($"unknown weight fill {Spec.Fill}");
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
