using CellCompiler.Onnx;

namespace CellCompiler.Compilation;

/// <summary>Options that change the emitted model. Seed changes only weight values.</summary>
public sealed record CompileOptions(long Seed = 0, int Opset = OnnxVersions.DefaultOpset)
{
    public static readonly CompileOptions Default = new();
}
