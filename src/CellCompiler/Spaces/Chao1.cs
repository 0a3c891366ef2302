namespace CellCompiler.Spaces;

/// <summary>Which formula of <see cref="Chao1"/> gave the estimate.</summary>
public enum Chao1Form
{
    /// <summary>Singletons and doubletons: the classic estimator.</summary>
    Classic,
    /// <summary>Singletons but no doubletons: the bias-corrected form.</summary>
    BiasCorrected,
    /// <summary>At most one singleton: nothing is estimated beyond the classes observed.</summary>
    Observed,
}

/// <summary>An estimate of the number of classes with its 95% interval.</summary>
public sealed record ClassEstimate(double Estimate, double Lower, double Upper, double Variance, Chao1Form Form,
    long Sample, long Observed, long Singletons, long Doubletons)
{
    /// <summary>Good-Turing sample coverage 1 - f1/n: the share of the population's draws that fall in classes already seen.</summary>
    public double Coverage => Sample == 0 ? 0 : 1 - (double)Singletons / Sample;
}

/// <summary>
/// Chao1: the number of classes in a population from how often each class occurs in a sample drawn
/// with replacement, f_k being the number of classes seen exactly k times, n the sample size and
/// S_obs the classes seen.
///   Estimator: Chao, A. (1984), "Nonparametric estimation of the number of classes in a population",
///   Scandinavian Journal of Statistics 11, 265-270: S = S_obs + f1^2 / (2 f2).
///   Variance and the log-normal confidence interval: Chao, A. (1987), "Estimating the population
///   size for capture-recapture data with unequal catchability", Biometrics 43, 783-791 (p. 787):
///   with T = S - S_obs and K = exp(z sqrt(ln(1 + var / T^2))), the interval is [S_obs + T / K, S_obs + T K].
///   The small-sample factor (n-1)/n, the bias-corrected form for f2 = 0, S = S_obs + (n-1)/n f1 (f1-1) / 2,
///   its variance, and the interval when nothing is missing (f1 &lt;= 1) are the forms given in Colwell's
///   EstimateS User's Guide (Appendix B, equations 5, 7, 13 and 14) and in Chao's SpadeR package.
/// The estimate is a lower bound when classes differ much in size and the sample covers little of the
/// population (low <see cref="ClassEstimate.Coverage"/>): rare classes are then missed beyond what f1 and f2 reveal.
/// </summary>
public static class Chao1
{
    /// <summary>z of a two-sided 95% interval.</summary>
    public const double Z95 = 1.959963984540054;

    /// <param name="frequencies">How many times each observed class occurs in the sample (every value at least 1).</param>
    public static ClassEstimate Estimate(IEnumerable<long> frequencies, double z = Z95)
    {
        long n = 0, observed = 0, f1 = 0, f2 = 0;
        var byFrequency = new Dictionary<long, long>();
        foreach (var count in frequencies)
        {
            if (count < 1) throw new ArgumentException("every observed class occurs at least once", nameof(frequencies));
            n += count;
            observed++;
            if (count == 1) f1++;
            else if (count == 2) f2++;
            byFrequency[count] = byFrequency.GetValueOrDefault(count) + 1;
        }
        if (n == 0) return new ClassEstimate(0, 0, 0, 0, Chao1Form.Observed, 0, 0, 0, 0);

        double s = observed, a = (n - 1.0) / n, f1d = f1, f2d = f2;
        if (f1 > 0 && f2 > 0)
        {
            var r = f1d / f2d;
            var estimate = s + a * f1d * f1d / (2 * f2d);
            var variance = f2d * (a * r * r / 2 + a * a * r * r * r + a * a * r * r * r * r / 4);
            return LogNormal(estimate, s, variance, z, Chao1Form.Classic, n, observed, f1, f2);
        }
        if (f1 > 1)
        {
            var estimate = s + a * f1d * (f1d - 1) / 2;
            var variance = a * f1d * (f1d - 1) / 2 + a * a * f1d * Math.Pow(2 * f1d - 1, 2) / 4 - a * a * Math.Pow(f1d, 4) / (4 * estimate);
            return LogNormal(estimate, s, variance, z, Chao1Form.BiasCorrected, n, observed, f1, f2);
        }
        // At most one singleton: the estimate is S_obs; the interval allows for classes the sample could still have missed.
        double varianceObserved = 0, weighted = 0, missed = 0;
        foreach (var (k, fk) in byFrequency)
        {
            varianceObserved += fk * (Math.Exp(-k) - Math.Exp(-2.0 * k));
            weighted += k * Math.Exp(-k) * fk;
            missed += fk * Math.Exp(-k);
        }
        varianceObserved -= weighted * weighted / n;
        varianceObserved = Math.Max(0, varianceObserved);
        var p = missed / s;
        var centre = s / (1 - p);
        var half = z * Math.Sqrt(varianceObserved) / (1 - p);
        return new ClassEstimate(s, Math.Max(s, centre - half), centre + half, varianceObserved, Chao1Form.Observed, n, observed, f1, f2);
    }

    private static ClassEstimate LogNormal(double estimate, double observed, double variance, double z, Chao1Form form,
        long n, long s, long f1, long f2)
    {
        var t = estimate - observed;
        if (t <= 0 || variance <= 0)
            return new ClassEstimate(estimate, estimate, estimate, Math.Max(0, variance), form, n, s, f1, f2);
        var k = Math.Exp(z * Math.Sqrt(Math.Log(1 + variance / (t * t))));
        return new ClassEstimate(estimate, observed + t / k, observed + t * k, variance, form, n, s, f1, f2);
    }
}
