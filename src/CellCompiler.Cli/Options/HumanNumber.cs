using System.CommandLine.Parsing;
using System.Globalization;

namespace CellCompiler.Cli.Options;

/// <summary>Numbers as people type them: 5000000, 5e6, 5M, 250k, 1.5G (k = 10^3, M = 10^6, G = 10^9, T = 10^12).</summary>
public static class HumanNumber
{
    public static bool TryParse(string text, out double value)
    {
        value = 0;
        var trimmed = text.Trim();
        if (trimmed.Length == 0) return false;
        var multiplier = char.ToUpperInvariant(trimmed[^1]) switch
        {
            'K' => 1e3,
            'M' => 1e6,
            'G' => 1e9,
            'T' => 1e12,
            _ => 1.0,
        };
        if (multiplier != 1.0) trimmed = trimmed[..^1];
        if (!double.TryParse(trimmed, NumberStyles.Float, CultureInfo.InvariantCulture, out var number) || !double.IsFinite(number))
            return false;
        value = number * multiplier;
        return true;
    }

    /// <summary>A parser for System.CommandLine options holding a positive number.</summary>
    public static double? ParsePositive(ArgumentResult result)
    {
        var token = result.Tokens.Count > 0 ? result.Tokens[0].Value : "";
        if (!TryParse(token, out var value) || value <= 0)
        {
            var option = (result.Parent as OptionResult)?.Option.Name ?? "option";
            result.AddError($"{option}: '{token}' is not a positive number (forms like 5e6, 5M, 250k are accepted)");
            return null;
        }
        return value;
    }

    public static long? ParsePositiveCount(ArgumentResult result)
    {
        if (ParsePositive(result) is not { } value) return null;
        if (value < 1 || value > long.MaxValue / 2)
        {
            result.AddError($"{(result.Parent as OptionResult)?.Option.Name ?? "option"}: a count must be between 1 and {long.MaxValue / 2:N0}");
            return null;
        }
        return (long)Math.Round(value);
    }
}
