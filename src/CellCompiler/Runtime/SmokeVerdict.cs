namespace CellCompiler.Runtime;

/// <summary>
/// What the CPU smoke test found: null Problem means the model works. Kind groups problems for summaries.
/// <see cref="OutOfTime"/>: the test was stopped at its time limit, so nothing is known about the model.
/// </summary>
public sealed record SmokeVerdict(string? Problem, string? Kind = null)
{
    public bool Works => Problem is null && !OutOfTime;
    public bool OutOfTime { get; init; }
    public static readonly SmokeVerdict Ok = new((string?)null);
}
