using System.Globalization;

namespace CellCompiler.Cli.Output;

/// <summary>Human-friendly numbers: exact count plus a short scaled form.</summary>
public static class Formatting
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    public static string Count(long value) => value < 10_000
        ? value.ToString("N0", Invariant)
        : $"{value.ToString("N0", Invariant)} ({Scaled(value)})";

    public static string Scaled(double value) => value switch
    {
        >= 1e12 => (value / 1e12).ToString("0.##", Invariant) + " T",
        >= 1e9 => (value / 1e9).ToString("0.##", Invariant) + " G",
        >= 1e6 => (value / 1e6).ToString("0.##", Invariant) + " M",
        >= 1e3 => (value / 1e3).ToString("0.##", Invariant) + " k",
        _ => value.ToString("0.##", Invariant),
    };

    public static string Duration(TimeSpan span) => span.TotalHours >= 1
        ? $"{(int)span.TotalHours}h{span.Minutes:00}m"
        : span.TotalMinutes >= 1 ? $"{(int)span.TotalMinutes}m{span.Seconds:00}s" : $"{span.Seconds}s";

    public static string Bytes(long bytes) => bytes switch
    {
        >= 1L << 30 => (bytes / (double)(1L << 30)).ToString("0.##", Invariant) + " GiB",
        >= 1L << 20 => (bytes / (double)(1L << 20)).ToString("0.##", Invariant) + " MiB",
        >= 1L << 10 => (bytes / (double)(1L << 10)).ToString("0.##", Invariant) + " KiB",
        _ => bytes.ToString(Invariant) + " B",
    };
}
