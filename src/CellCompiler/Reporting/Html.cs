using System.Globalization;
using System.Net;

namespace CellCompiler.Reporting;

/// <summary>Escaping and number formats for the report's HTML.</summary>
public static class Html
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    public static string Text(string? text) => WebUtility.HtmlEncode(text ?? "");

    public static string Attribute(string? text) => WebUtility.HtmlEncode(text ?? "");

    public static string Whole(long value) => value.ToString("N0", Invariant);

    public static string Number(double value) => value.ToString("R", Invariant);

    /// <summary>1.23 M, 456 k, 12 (for ticks and tiles).</summary>
    public static string Scaled(double value)
    {
        // Axis ticks come as 999999.9999...: round to 12 significant digits first.
        value = double.Parse(value.ToString("G12", Invariant), Invariant);
        return ScaledExact(value);
    }

    private static string ScaledExact(double value) => Math.Abs(value) switch
    {
        >= 1e12 => (value / 1e12).ToString("0.##", Invariant) + " T",
        >= 1e9 => (value / 1e9).ToString("0.##", Invariant) + " G",
        >= 1e6 => (value / 1e6).ToString("0.##", Invariant) + " M",
        >= 1e3 => (value / 1e3).ToString("0.##", Invariant) + " k",
        _ => value.ToString("0.##", Invariant),
    };

    /// <summary>Four significant digits for a metric (0.8734, 12.5, 1234), scaled from 10,000 on (12.3 k).</summary>
    public static string Significant(double value)
    {
        value = double.Parse(value.ToString("G12", Invariant), Invariant);
        if (Math.Abs(value) >= 1e4) return ScaledExact(value);
        if (value == 0) return "0";
        var decimals = Math.Clamp(3 - (int)Math.Floor(Math.Log10(Math.Abs(value))), 0, 6);
        return Math.Round(value, decimals).ToString(decimals == 0 ? "0" : "0." + new string('#', decimals), Invariant);
    }

    public static string Milliseconds(double ms) => ms switch
    {
        >= 100 => ms.ToString("0", Invariant),
        >= 10 => ms.ToString("0.0", Invariant),
        >= 1 => ms.ToString("0.00", Invariant),
        _ => ms.ToString("0.000", Invariant),
    };

    /// <summary>A tick of a milliseconds axis: 0.05, 0.1, 2.5, 150.</summary>
    public static string MillisecondTick(double ms)
    {
        ms = double.Parse(ms.ToString("G12", Invariant), Invariant);
        return ms.ToString(ms >= 10 ? "0" : "0.####", Invariant);
    }

    public static string Megabytes(long bytes) => (bytes / 1e6).ToString(bytes >= 10_000_000 ? "0.0" : "0.00", Invariant);

    public static string Percent(long part, long total) =>
        total == 0 ? "0%" : (100.0 * part / total).ToString(part * 1000 < total && part > 0 ? "0.0" : "0", Invariant) + "%";
}
