namespace CellCompiler.Spaces;

/// <summary>The share of the population's draws that fall in classes the sample never saw, with its 95% interval.</summary>
public sealed record MissingMass(double Estimate, double Lower, double Upper);

/// <summary>
/// The Good-Turing estimate of the missing mass from a sample of n draws with replacement, f1 of its
/// classes seen once and f2 twice:
///   Good, I. J. (1953), "The population frequencies of species and the estimation of population
///   parameters", Biometrika 40, 237-264: the missing mass is about f1 / n (Turing's formula).
///   Esty, W. W. (1983), "A normal limit law for a nonparametric estimator of the coverage of a random
///   sample", Annals of Statistics 11, 905-912: the error of that estimate is asymptotically normal
///   with variance (f1 + 2 f2 - f1^2 / n) / n^2 (as the paper's zbMATH review, Zbl 0599.62053, states it).
/// Unlike Chao1 it needs no assumption on how class sizes vary, and f1 / n errs upward on average
/// (its expectation is the missing mass of a sample one draw smaller), which suits an upper bound.
/// </summary>
public static class GoodTuring
{
    public static MissingMass Estimate(long n, long singletons, long doubletons, double z = Chao1.Z95)
    {
        if (n <= 0) return new MissingMass(1, 0, 1);
        double f1 = singletons, f2 = doubletons;
        var mass = f1 / n;
        var sd = Math.Sqrt(Math.Max(0, f1 + 2 * f2 - f1 * f1 / n)) / n;
        return new MissingMass(mass, Math.Max(0, mass - z * sd), Math.Min(1, mass + z * sd));
    }
}
