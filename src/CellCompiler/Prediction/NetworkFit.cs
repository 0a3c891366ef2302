namespace CellCompiler.Prediction;

/// <summary>
/// What whole networks pay beyond the sum of their units, fitted at calibration: predicted =
/// <see cref="InterceptMs"/> + <see cref="Slope"/> x (sum of the units). Units are timed in short
/// chains whose few weights stay in the core's caches; a whole network streams more weights and
/// activations than the caches hold, so the sum reads low, and more so the larger the network
/// (README, measured). A line through whole networks of the skeleton, timed like the units (the
/// low quantile of interleaved runs), corrects that to first order.
/// </summary>
/// <param name="Networks">How many whole networks the line was fitted to.</param>
/// <param name="MeanAbsoluteErrorPercent">The fitted line's mean absolute error on those networks, in percent of their measured time.</param>
public sealed record NetworkFit(double InterceptMs, double Slope, int Networks, double MeanAbsoluteErrorPercent, string How,
    DateTimeOffset Measured, double? Load)
{
    /// <summary>Fewer networks than this fit nothing: the table then predicts the plain sum.</summary>
    public const int MinNetworks = 3;

    public double Apply(double unitSum) => Math.Max(0, InterceptMs + Slope * unitSum);

    /// <summary>
    /// The line through (sum of units, measured ms) that minimises the squared relative error, the
    /// error the accuracy targets count in (weighted least squares, weights 1 / measured^2). Null when
    /// there are too few points, the sums do not vary, or the line would not rise with the sum.
    /// </summary>
    public static (double Intercept, double Slope, double MeanAbsoluteErrorPercent)? Line(IReadOnlyList<(double UnitSum, double MeasuredMs)> points)
    {
        var usable = points.Where(p => p.MeasuredMs > 0 && double.IsFinite(p.UnitSum) && double.IsFinite(p.MeasuredMs)).ToList();
        if (usable.Count < MinNetworks) return null;
        double sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
        foreach (var (x, y) in usable)
        {
            var w = 1 / (y * y);
            sw += w; sx += w * x; sy += w * y; sxx += w * x * x; sxy += w * x * y;
        }
        var determinant = sw * sxx - sx * sx;
        if (determinant <= 1e-12 * sw * sxx) return null;
        var slope = (sw * sxy - sx * sy) / determinant;
        var intercept = (sy - slope * sx) / sw;
        if (!(slope > 0) || !double.IsFinite(intercept)) return null;
        var error = usable.Average(p => Math.Abs(intercept + slope * p.UnitSum - p.MeasuredMs) / p.MeasuredMs) * 100;
        return (intercept, slope, error);
    }
}
