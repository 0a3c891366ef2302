namespace CellCompiler.Cli;

/// <summary>Exit codes of contract section 5.</summary>
public static class ExitCodes
{
    public const int Ok = 0;
    /// <summary>The work ran but a candidate failed a check or a budget (e.g. a dead cell).</summary>
    public const int CandidateFailed = 1;
    /// <summary>The input or the command line is wrong.</summary>
    public const int BadInput = 2;
}
