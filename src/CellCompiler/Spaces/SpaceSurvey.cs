using CellCompiler.Input;

namespace CellCompiler.Spaces;

/// <param name="EnumerateLimit">Enumerate exactly when the space has at most this many genotypes; otherwise estimate from samples.</param>
/// <param name="Samples">Uniform samples (with replacement) for the estimates and for the figures.</param>
/// <param name="Workers">Parallel workers; 0 means one per core.</param>
public sealed record SurveyOptions(long EnumerateLimit = SurveyOptions.DefaultEnumerateLimit, int Samples = SurveyOptions.DefaultSamples,
    long Seed = 0, int Workers = 0)
{
    public const long DefaultEnumerateLimit = 1_000_000;
    public const int DefaultSamples = 5_000;
    public const int MaxSamples = 1_000_000;

    public int WorkerCount => Workers > 0 ? Workers : Environment.ProcessorCount;
}

public enum SurveyPhase { Enumerating, Sampling, CountingFigures }

/// <summary>How far a phase of a survey is: <paramref name="Done"/> of <paramref name="Total"/> genotypes.</summary>
public readonly record struct SurveyProgress(SurveyPhase Phase, long Done, long Total);

/// <summary>A value with its 95% interval; an exact value has both ends equal to it.</summary>
public sealed record Bounded(double Value, double Lower, double Upper)
{
    public static Bounded Exactly(double value) => new(value, value, value);
}

/// <summary>What <c>cellc space</c> reports about a space under one skeleton.</summary>
/// <param name="Exact">True: every genotype was enumerated; false: dead fraction and networks are estimated from the sample.</param>
/// <param name="Enumeration">The exact counts, when enumerated.</param>
/// <param name="Networks">Distinct live networks by network_hash under the skeleton's merge mode.</param>
/// <param name="Estimate">The estimate behind <paramref name="Networks"/> when estimated.</param>
public sealed record SpaceSurvey(SearchSpace Space, Skeleton Skeleton, SurveyOptions Options, bool Exact,
    EnumerationResult? Enumeration, Bounded DeadFraction, Bounded Networks, NetworkCountEstimate? Estimate,
    int Samples, long SampleDead, long SampleNetworks, long InexactHashes, FigureSummary Figures, TimeSpan Elapsed)
{
    public string Method => Exact ? "exact" : "estimated";
}

/// <summary>
/// `cellc space`: counts a space's genotypes exactly, finds its dead fraction and its distinct
/// networks (exactly by enumeration up to <see cref="SurveyOptions.EnumerateLimit"/> genotypes,
/// otherwise estimated from uniform samples: Wilson's interval for the dead fraction, Chao1 with a
/// Good-Turing upper bound for the networks), and the params and
/// MACs of live samples under the skeleton.
/// </summary>
public static class SpaceSurveyor
{
    public static SpaceSurvey Run(SearchSpace space, Skeleton skeleton, SurveyOptions options, Action<SurveyProgress>? progress = null)
    {
        if (options.Samples is < 0 or > SurveyOptions.MaxSamples)
            throw new ArgumentOutOfRangeException(nameof(options), $"samples must be 0 to {SurveyOptions.MaxSamples:N0}");
        var clock = System.Diagnostics.Stopwatch.StartNew();
        var workers = options.WorkerCount;
        var exact = options.EnumerateLimit > 0 && space.Genotypes <= options.EnumerateLimit;
        if (!exact && options.Samples == 0)
            throw new InputException("command line", "--samples",
                $"the space has {space.Genotypes} genotypes, more than --enumerate-limit {options.EnumerateLimit:N0}, so its counts are estimated from samples: give --samples 1 or more");

        EnumerationResult? enumeration = null;
        if (exact)
        {
            var total = (long)space.Genotypes;
            enumeration = SpaceEnumerator.Run(space, skeleton.Merge, workers,
                done => progress?.Invoke(new SurveyProgress(SurveyPhase.Enumerating, done, total)));
        }
        var sample = SpaceSampler.Draw(space, skeleton.Merge, options.Samples, options.Seed, workers,
            done => progress?.Invoke(new SurveyProgress(SurveyPhase.Sampling, done, options.Samples)));
        var liveSamples = (long)Math.Min(sample.LiveCount, SpaceFigures.MaxMeasured);
        var figures = SpaceFigures.Measure(space, skeleton, sample, workers,
            done => progress?.Invoke(new SurveyProgress(SurveyPhase.CountingFigures, done, liveSamples)));

        var frequencies = sample.NetworkFrequencies().ToList();
        Bounded dead, networks;
        NetworkCountEstimate? estimate = null;
        if (enumeration is not null)
        {
            dead = Bounded.Exactly((double)enumeration.Dead / enumeration.Genotypes);
            networks = Bounded.Exactly(enumeration.Networks);
        }
        else
        {
            dead = Wilson(sample.DeadCount, sample.Count);
            // A space past 1.8e308 genotypes converts to infinity: the bound stays the largest finite double instead.
            estimate = NetworkCountEstimate.From(frequencies, Math.Min(double.MaxValue, (double)space.Genotypes * (1 - dead.Lower)));
            networks = estimate.Networks;
        }
        return new SpaceSurvey(space, skeleton, options, exact, enumeration, dead, networks, estimate,
            sample.Count, sample.DeadCount, frequencies.Count, (enumeration?.InexactHashes ?? 0) + sample.InexactHashes, figures, clock.Elapsed);
    }

    /// <summary>
    /// The Wilson score interval of a proportion (95%): Wilson, E. B. (1927), "Probable inference, the
    /// law of succession, and statistical inference", Journal of the American Statistical Association
    /// 22, 209-212. Unlike the normal approximation it stays inside [0, 1] and is sound at 0 and at n.
    /// </summary>
    public static Bounded Wilson(long successes, long n, double z = Chao1.Z95)
    {
        if (n == 0) return new Bounded(double.NaN, 0, 1);
        var p = (double)successes / n;
        var z2 = z * z;
        var centre = (p + z2 / (2 * n)) / (1 + z2 / n);
        var half = z / (1 + z2 / n) * Math.Sqrt(p * (1 - p) / n + z2 / (4.0 * n * n));
        // At 0 and at n one end is exactly 0 or 1; computed, it is that plus rounding noise (1e-19 and the like).
        var lower = successes == 0 ? 0 : Math.Max(0, centre - half);
        var upper = successes == n ? 1 : Math.Min(1, centre + half);
        return new Bounded(p, lower, upper);
    }
}
