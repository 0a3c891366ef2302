namespace CellCompiler.Screening;

/// <summary>Outcome of screening one candidate, from best to worst.</summary>
public enum CheckStatus
{
    /// <summary>Works and fits every budget.</summary>
    Ok,
    /// <summary>Works but exceeds a budget.</summary>
    OverBudget,
    /// <summary>Valid, but no working network: dead cell, runtime failure, non-finite or input-independent output.</summary>
    Broken,
    /// <summary>The genotype does not parse or validate.</summary>
    Invalid,
}

public static class CheckStatusNames
{
    public static string Name(this CheckStatus status) => status switch
    {
        CheckStatus.Ok => "ok",
        CheckStatus.OverBudget => "over_budget",
        CheckStatus.Broken => "broken",
        _ => "invalid",
    };
}
