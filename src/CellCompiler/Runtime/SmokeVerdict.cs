namespace CellCompiler.Runtime;

/// <summary>What the CPU smoke test found: null Problem means the model works. Kind groups problems for summaries.</summary>
public sealed record SmokeVerdict(string? Problem, string? Kind = null)
{
    public bool Works => Problem is null;
    public static readonly SmokeVerdict Ok = new((string?)null);
}
