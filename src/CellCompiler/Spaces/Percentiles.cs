namespace CellCompiler.Spaces;

/// <summary>A distribution summed up: min, 10th, 25th, 50th, 75th, 90th percentile and max (linear interpolation between order statistics).</summary>
public sealed record Percentiles(double Min, double P10, double P25, double P50, double P75, double P90, double Max)
{
    public static Percentiles? Of(IReadOnlyCollection<long> values)
    {
        if (values.Count == 0) return null;
        var sorted = values.Select(v => (double)v).Order().ToArray();
        double At(double q) => Runtime.LatencyStats.Percentile(sorted, q);
        return new Percentiles(sorted[0], At(0.10), At(0.25), At(0.50), At(0.75), At(0.90), sorted[^1]);
    }

    /// <summary>Name and value, in order, for printing.</summary>
    public IEnumerable<(string Name, double Value)> Named() =>
        [("min", Min), ("p10", P10), ("p25", P25), ("p50", P50), ("p75", P75), ("p90", P90), ("max", Max)];
}
