using System.Globalization;

namespace CellCompiler;

/// <summary>
/// How counts and numbers are worded for a person, in one place for every message: a noun's
/// singular or plural, and figures with the same number of significant digits side by side.
/// </summary>
public static class Wording
{
    /// <summary>The noun alone: "record" for 1, "records" otherwise (or the given plural).</summary>
    public static string Noun(long count, string singular, string? plural = null) =>
        count == 1 ? singular : plural ?? singular + "s";

    /// <summary>A count with its noun: "1 line", "2 lines", "1,000 candidates".</summary>
    public static string Counted(long count, string singular, string? plural = null) =>
        $"{count.ToString("N0", CultureInfo.InvariantCulture)} {Noun(count, singular, plural)}";

    /// <summary>
    /// Three significant digits ("3.45", "36.0", "1,234"), so that figures side by side read alike;
    /// rounding that carries into the next power of ten keeps three digits ("9.996" is "10.0").
    /// </summary>
    public static string Significant(double value)
    {
        if (value == 0 || !double.IsFinite(value)) return value.ToString("0", CultureInfo.InvariantCulture);
        var magnitude = (int)Math.Floor(Math.Log10(Math.Abs(value)));
        var decimals = Math.Clamp(2 - magnitude, 0, 15); // Math.Round takes at most 15 digits; smaller values print as 0
        var rounded = Math.Round(value, decimals);
        if (rounded == 0) return "0";
        if (rounded != 0 && (int)Math.Floor(Math.Log10(Math.Abs(rounded))) > magnitude) decimals = Math.Max(0, decimals - 1);
        return rounded.ToString(decimals == 0 ? "#,0" : "F" + decimals, CultureInfo.InvariantCulture);
    }
}
