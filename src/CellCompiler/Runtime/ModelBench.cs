using CellCompiler.Input;
using CellCompiler.Inspection;
using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Runtime;

/// <summary>An ONNX model read for `bench`: its bytes as ONNX Runtime gets them, and whether this tool made it.</summary>
public sealed record BenchModel(byte[] Bytes, bool MadeByUs);

/// <summary>
/// `bench` of an ONNX model file, the same for the CLI and the fuzz tests: the file is read with a
/// bound while reading, every batch size is checked against <see cref="RunNeeds"/> before any session,
/// and whatever ONNX Runtime refuses in the model is bad input naming the file.
/// </summary>
public static class ModelBench
{
    public static BenchModel Read(string path, IReadOnlyList<int> batches, long? availableBytes = null)
    {
        var (model, bytes) = ModelFileReader.ReadWithBytes(path);
        RunNeeds.OfModel(model, bytes.LongLength).Require(path, batches, availableBytes);
        // A model this tool made carries its genotype's hash: its node names are then hierarchical paths.
        return new BenchModel(bytes, model.MetadataProps.Any(p => p.Key == "genotype_hash"));
    }

    /// <summary>Runs <paramref name="measure"/>; a model ONNX Runtime cannot load or run is bad input naming <paramref name="path"/>.</summary>
    public static T OnRuntime<T>(string path, Func<T> measure)
    {
        try { return measure(); }
        catch (Exception e) when (e is OnnxRuntimeException or NotSupportedException)
        {
            throw new InputException(path, "", $"cannot run the model on ONNX Runtime: {e.Message.ReplaceLineEndings(" ")}");
        }
    }
}
