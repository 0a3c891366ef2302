namespace CellCompiler.Prediction;

/// <summary>
/// What whole networks pay beyond the sum of their units, fitted at calibration: predicted =
/// <see cref="InterceptMs"/> + <see cref="Slope"/> x (sum of the units). Units are timed in short
/// chains whose few weights stay in the core's caches; a whole network streams more weights and
/// activations than the caches hold, so the sum reads low, and more so the larger the network
/// (README, measured); and the units are read at a low quantile of their runs while `check --latency`
/// reports the median. A ratio fitted to whole networks of the skeleton, each timed in several sessions
/// and read at its median, corrects both to first order. Calibration fits the line
/// through 0 (<see cref="Line"/>); a table may hold an intercept all the same, and it is applied.
/// </summary>
/// <param name="Networks">How many whole networks the line was fitted to.</param>
/// <param name="MeanAbsoluteErrorPercent">The fitted line's mean absolute error on those networks, in percent of their measured time.</param>
/// <param name="Skeleton">The skeleton/1 JSON of the skeleton fitted: the ratio differs between skeletons (README), so it applies to no other.</param>
public sealed record NetworkFit(double InterceptMs, double Slope, int Networks, double MeanAbsoluteErrorPercent, string How,
    DateTimeOffset Measured, double? Load, string Skeleton)
{
    /// <summary>Fewer networks than this fit nothing: the table then predicts the plain sum.</summary>
    public const int MinNetworks = 3;

    public double Apply(double unitSum) => Math.Max(0, InterceptMs + Slope * unitSum);

    /// <summary>
    /// The line through 0 from the sum of units to the measured ms that minimises the squared relative
    /// error, the error the accuracy targets count in: slope = sum(x/y) / sum(x^2/y^2), intercept 0.
    /// A free intercept came out negative on every calibration measured here (-0.13 to -0.41 ms on
    /// proxy), which sent the smallest networks' predictions far below their time; a ratio cannot.
    /// Null when there are too few points or they give no positive ratio.
    /// </summary>
    public static (double Intercept, double Slope, double MeanAbsoluteErrorPercent)? Line(IReadOnlyList<(double UnitSum, double MeasuredMs)> points)
    {
        var usable = points.Where(p => p.MeasuredMs > 0 && p.UnitSum > 0 && double.IsFinite(p.UnitSum) && double.IsFinite(p.MeasuredMs)).ToList();
        if (usable.Count < MinNetworks) return null;
        double sxy = 0, sxx = 0;
        foreach (var (x, y) in usable)
        {
            sxy += x / y;
            sxx += x * x / (y * y);
        }
        var slope = sxy / sxx;
        if (!(slope > 0) || !double.IsFinite(slope)) return null;
        var error = usable.Average(p => Math.Abs(slope * p.UnitSum - p.MeasuredMs) / p.MeasuredMs) * 100;
        return (0, slope, error);
    }
}
