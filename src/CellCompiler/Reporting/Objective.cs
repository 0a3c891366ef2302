using CellCompiler.Input;

namespace CellCompiler.Reporting;

/// <summary>
/// A figure the report weighs against cost (`--objective NAME[:max|min]`): a metric of the scores
/// file, or else a numeric field of the records' `meta` object. Without a direction it is maximised
/// (the usual objective is an accuracy).
/// </summary>
public sealed record Objective(string Name, bool Maximise)
{
    public string Direction => Maximise ? "max" : "min";

    /// <summary>"accuracy (higher is better)".</summary>
    public string Describe() => $"{Name} ({(Maximise ? "higher" : "lower")} is better)";

    /// <summary>Reads NAME, NAME:max or NAME:min; anything else is bad input naming the option.</summary>
    public static Objective Parse(string text, string origin = "command line", string option = "--objective")
    {
        var colon = text.LastIndexOf(':');
        var (name, direction) = colon < 0 ? (text, "max") : (text[..colon], text[(colon + 1)..]);
        if (name.Length == 0)
            throw new InputException(origin, option, $"'{text}' names no metric (expected NAME, NAME:max or NAME:min)");
        if (name.Any(char.IsControl))
            throw new InputException(origin, option, "the metric name holds a control character");
        return direction switch
        {
            "max" => new Objective(name, true),
            "min" => new Objective(name, false),
            _ => throw new InputException(origin, option, $"'{text}': the direction after ':' must be max or min, found '{direction}'"),
        };
    }
}
