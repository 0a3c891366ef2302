namespace CellCompiler.Runtime;

/// <summary>What the CPU smoke test found: null Problem means the model works.</summary>
public sealed record SmokeVerdict(string? Problem)
{
    public bool Works => Problem is null;
    public static readonly SmokeVerdict Ok = new((string?)null);
}
