namespace CellCompiler.Lowering;

/// <summary>The cell's output does not depend on its input, so no network can be built.</summary>
public sealed class DeadCellException(string cellName, string detail)
    : Exception($"the cell '{cellName}' is dead: its output does not depend on its input ({detail})")
{
    public string CellName { get; } = cellName;
}
