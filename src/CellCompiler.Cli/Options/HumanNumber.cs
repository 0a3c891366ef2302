using System.CommandLine.Parsing;
using System.Globalization;

namespace CellCompiler.Cli.Options;

/// <summary>
/// Numbers as people type them, parsed the same way by every option. Counts (params, MACs) take
/// 5000000, 5e6, 5M, 250k, 1.5G (k = 10^3, M = 10^6, G = 10^9, T = 10^12); a lowercase "m" is refused
/// (milli or mega?). Amounts in a unit (MB, GB, ms) take plain numbers only: the unit is in the
/// option's name. Whole-number options take digits only. A bad value is a parse error (exit 2),
/// never an exception.
/// </summary>
public static class HumanNumber
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    private static string Token(ArgumentResult result) => result.Tokens.Count > 0 ? result.Tokens[0].Value : "";

    private static string OptionName(ArgumentResult result) => (result.Parent as OptionResult)?.Option.Name ?? "option";

    /// <summary>A count with an optional k/K, M, G or T suffix; null and the problem when it is not one.</summary>
    public static double? TryParseCount(string text, out string? problem)
    {
        problem = null;
        var trimmed = text.Trim();
        if (trimmed.Length == 0) { problem = "is empty"; return null; }
        var multiplier = trimmed[^1] switch
        {
            'k' or 'K' => 1e3,
            'M' => 1e6,
            'G' => 1e9,
            'T' => 1e12,
            'm' => double.NaN,
            _ => 1.0,
        };
        if (double.IsNaN(multiplier))
        {
            problem = $"ends in 'm', which could mean milli or mega; write {trimmed[..^1]}M for millions";
            return null;
        }
        if (multiplier != 1.0) trimmed = trimmed[..^1];
        if (!double.TryParse(trimmed, NumberStyles.Float, Invariant, out var number) || !double.IsFinite(number))
        {
            problem = "is not a number (forms like 5000000, 5e6, 5M and 250k are accepted)";
            return null;
        }
        return number * multiplier;
    }

    /// <summary>A positive count (budgets on params and MACs).</summary>
    public static long? ParsePositiveCount(ArgumentResult result)
    {
        var token = Token(result);
        var value = TryParseCount(token, out var problem);
        if (value is null || value <= 0)
        {
            result.AddError($"{OptionName(result)}: '{token}' {problem ?? "is not a positive number"}");
            return null;
        }
        if (value < 1 || value > long.MaxValue / 2)
        {
            result.AddError($"{OptionName(result)}: a count must be between 1 and {long.MaxValue / 2:N0}");
            return null;
        }
        return (long)Math.Round(value.Value);
    }

    /// <summary>A parser for a positive amount in the unit the option names (MB, GB, ms).</summary>
    public static Func<ArgumentResult, double?> PositiveAmount(string unit) => result =>
    {
        var token = Token(result);
        if (double.TryParse(token.Trim(), NumberStyles.Float, Invariant, out var value) && double.IsFinite(value) && value > 0)
            return value;
        var digits = new string(token.Trim().TakeWhile(c => char.IsDigit(c) || c is '.' or 'e' or 'E' or '-' or '+').ToArray());
        var hint = digits.Length > 0 && digits.Length < token.Trim().Length && double.TryParse(digits, NumberStyles.Float, Invariant, out _)
            ? $"write the number alone: the option is already in {unit} (e.g. {OptionName(result)} {digits})"
            : $"give a positive number of {unit}, e.g. {OptionName(result)} 2.5";
        result.AddError($"{OptionName(result)}: '{token}' is not a positive number; {hint}");
        return null;
    };

    /// <summary>A parser for a whole number between <paramref name="min"/> and <paramref name="max"/>.</summary>
    public static Func<ArgumentResult, int> WholeNumber(int min, int max) => result =>
    {
        var token = Token(result);
        if (long.TryParse(token.Trim(), NumberStyles.AllowLeadingSign, Invariant, out var value))
        {
            if (value >= min && value <= max) return (int)value;
            result.AddError($"{OptionName(result)} must be between {min} and {max}, found {value}");
            return min;
        }
        result.AddError($"{OptionName(result)}: '{token}' is not a whole number (between {min} and {max})");
        return min;
    };

    /// <summary>A parser for any whole number that fits 64 bits (seeds).</summary>
    public static long LongNumber(ArgumentResult result)
    {
        var token = Token(result);
        if (long.TryParse(token.Trim(), NumberStyles.AllowLeadingSign, Invariant, out var value)) return value;
        result.AddError($"{OptionName(result)}: '{token}' is not a whole number");
        return 0;
    }
}
