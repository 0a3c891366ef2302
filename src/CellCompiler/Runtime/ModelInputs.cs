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
        // A model without any symbolic dimension has its batch size built in: never report another one.
        var symbolic = session.InputMetadata.Values.Any(m => m.Dimensions.Any(d => d <= 0));
        if (!symbolic && shapes.Count > 0 && shapes[0].Item2.Length > 0 && shapes[0].Item2[0] != batch)
            throw new NotSupportedException(
                $"input '{shapes[0].Item1}' has the fixed shape [{string.Join(", ", shapes[0].Item2)}]: " +
                $"the model runs only at batch {shapes[0].Item2[0]}, not {batch}; pass --batch {shapes[0].Item2[0]}");
        return shapes;
    }

    public static OrtValue Random(long[] shape, long seed) =>
        OrtValue.CreateTensorValueFromMemory(ForwardPass.RandomInput(shape, seed), shape);
}
