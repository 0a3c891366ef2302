using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Graph;
using CellCompiler.Shapes;

namespace CellCompiler.Compilation;

/// <summary>Everything one compilation produces: the model bytes and what a user decides on.</summary>
public sealed record CompiledModel(
    string Name,
    string Hash,
    Skeleton Skeleton,
    CompileOptions Options,
    ShapedNetwork Network,
    NetworkFigures Figures,
    IReadOnlyList<string> Warnings,
    byte[] OnnxBytes)
{
    public TensorShape InputShape => Network.InputShape;
    public TensorShape OutputShape => Network.OutputShape;
}
