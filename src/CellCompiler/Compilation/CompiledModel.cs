using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Graph;
using CellCompiler.Shapes;

namespace CellCompiler.Compilation;

/// <summary>
/// Everything one compilation produces: the model bytes and what a user decides on. <see cref="Hash"/>
/// is the network under concat merges, <see cref="NetworkHash"/> under the skeleton's merge mode
/// (contract section 4).
/// </summary>
public sealed record CompiledModel(
    string Name,
    string Hash,
    string NetworkHash,
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
