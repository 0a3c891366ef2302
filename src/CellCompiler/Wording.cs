using System.Globalization;

namespace CellCompiler;

/// <summary>The one place that chooses between a noun's singular and plural, for every message and page.</summary>
public static class Wording
{
    /// <summary>The noun alone: "record" for 1, "records" otherwise (or the given plural).</summary>
    public static string Noun(long count, string singular, string? plural = null) =>
        count == 1 ? singular : plural ?? singular + "s";

    /// <summary>A count with its noun: "1 line", "2 lines", "1,000 candidates".</summary>
    public static string Counted(long count, string singular, string? plural = null) =>
        $"{count.ToString("N0", CultureInfo.InvariantCulture)} {Noun(count, singular, plural)}";
}
