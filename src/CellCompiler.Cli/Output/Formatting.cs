using System.Globalization;

namespace CellCompiler.Cli.Output;

/// <summary>
/// Numbers as a person reads them, the same in every command: decimal units (k = 10^3, MB = 10^6
/// bytes, GB = 10^9 bytes, as the budgets use) and three significant digits, so that the figures of
/// a column read alike ("46.3 M" beside "45.6 M", "3.45%" beside "36.0%").
/// </summary>
public static class Formatting
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    /// <summary>The exact count, and for large ones its short form: "11,242,112 (11.2 M)".</summary>
    public static string Count(long value) => value < 10_000
        ? value.ToString("N0", Invariant)
        : $"{value.ToString("N0", Invariant)} ({Scaled(value)})";

    /// <summary>A count in k, M, G or T with three significant digits: "76.1 k", "4.00 M", "512".</summary>
    public static string Scaled(double value) => Math.Abs(value) switch
    {
        // Past the last unit (a space's estimated networks can reach 1e35): three digits and an exponent, as "6.23e35".
        >= 999.5e12 => value.ToString("0.##e0", Invariant),
        >= 999.5e9 => Wording.Significant(value / 1e12) + " T",
        >= 999.5e6 => Wording.Significant(value / 1e9) + " G",
        >= 999.5e3 => Wording.Significant(value / 1e6) + " M",
        >= 999.5 => Wording.Significant(value / 1e3) + " k",
        _ => value == Math.Floor(value) ? value.ToString("0", Invariant) : Wording.Significant(value),
    };

    /// <summary>Bytes in decimal units with three significant digits: "262 kB", "2.19 MB", "1.52 GB".</summary>
    public static string Bytes(long bytes) => Math.Abs((double)bytes) switch
    {
        >= 999.5e9 => Wording.Significant(bytes / 1e12) + " TB",
        >= 999.5e6 => Wording.Significant(bytes / 1e9) + " GB",
        >= 999.5e3 => Wording.Significant(bytes / 1e6) + " MB",
        >= 999.5 => Wording.Significant(bytes / 1e3) + " kB",
        _ => bytes.ToString(Invariant) + " B",
    };

    public static string Duration(TimeSpan span) => span.TotalHours >= 1
        ? $"{(int)span.TotalHours}h{span.Minutes:00}m"
        : span.TotalMinutes >= 1 ? $"{(int)span.TotalMinutes}m{span.Seconds:00}s" : $"{span.Seconds}s";
}
