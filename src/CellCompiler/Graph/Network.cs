using CellCompiler.Input;

namespace CellCompiler.Graph;

/// <summary>
/// The lowered network: ops in execution order over named tensors. Tensor shapes are not known
/// yet; shape inference adds them.
/// </summary>
public sealed record Network(
    string InputName,
    InputSpec Input,
    string OutputName,
    IReadOnlyList<NetOp> Ops,
    IReadOnlyList<string> Warnings)
{
    public const string DefaultInputName = "images";
    public const string DefaultOutputName = "logits";
}
