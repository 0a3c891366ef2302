namespace CellCompiler.Lowering;

/// <summary>The cell's output does not depend on its input, so no network can be built.</summary>
public sealed class DeadCellException : Exception
{
    public DeadCellException(string cellName, string detail, string? origin = null)
        : base($"{(origin is null ? "" : origin + ": ")}the cell '{cellName}' is dead: its output does not depend on its input ({detail})")
    {
        CellName = cellName;
        Detail = detail;
        Origin = origin;
    }

    public string CellName { get; }
    public string Detail { get; }

    /// <summary>The file the genotype came from, when known.</summary>
    public string? Origin { get; }

    /// <summary>The same finding, naming the file it came from.</summary>
    public DeadCellException In(string origin) => new(CellName, Detail, origin);
}
