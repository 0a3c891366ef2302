using Microsoft.ML.OnnxRuntime;
using Microsoft.ML.OnnxRuntime.Tensors;

namespace CellCompiler.Runtime;

/// <summary>
/// Seeded float inputs for any model: every symbolic or unknown dimension is set to the batch
/// size, every other size is taken from the model. Non-float inputs are refused.
/// </summary>
public static class ModelInputs
{
    public static IReadOnlyList<(string Name, long[] Shape)> Shapes(InferenceSession session, int batch)
    {
        var shapes = new List<(string, long[])>();
        foreach (var (name, metadata) in session.InputMetadata)
        {
            if (metadata.ElementDataType != TensorElementType.Float)
                throw new NotSupportedException($"input '{name}' is {metadata.ElementDataType}; only float32 inputs are supported");
            shapes.Add((name, metadata.Dimensions.Select(d => d > 0 ? (long)d : batch).ToArray()));
        }
        return shapes;
    }

    public static OrtValue Random(long[] shape, long seed) =>
        OrtValue.CreateTensorValueFromMemory(ForwardPass.RandomInput(shape, seed), shape);
}
