namespace CellCompiler.Spaces;

/// <summary>
/// The number of distinct live networks of a space estimated from uniform samples: Chao1 for the
/// value and the lower end, a Good-Turing bound for the upper end.
/// </summary>
/// <param name="Networks">The estimate and its 95% interval.</param>
/// <param name="Chao1">Chao1 on the live samples' network frequencies.</param>
/// <param name="Missing">The share of live genotypes in networks the sample never saw.</param>
/// <param name="LiveGenotypesUpper">The upper end of the live genotypes' count (genotypes times the live fraction's upper end).</param>
/// <param name="MaybeAllSeen">The sample cannot exclude that it saw every network (the missing mass's interval reaches 0).</param>
public sealed record NetworkCountEstimate(Bounded Networks, ClassEstimate Chao1, MissingMass Missing, double LiveGenotypesUpper,
    bool MaybeAllSeen)
{
    /// <summary>
    /// Every network the sample missed is spelled by at least one live genotype, and those genotypes
    /// together are the missing mass times the live genotypes; so the unseen networks number at most
    /// that product, however unevenly networks are spelled. Chao1 alone falls short exactly when they
    /// are uneven (a few networks spelled by thousands of genotypes, many by one: README, measured),
    /// and then this bound is nearly tight, because the networks it misses are mostly spelled once.
    /// The lower end is Chao1's (Chao 1987), or the networks seen when the missing mass may be 0
    /// (the log-normal interval always starts above them, even when nothing is left to find).
    /// </summary>
    /// <param name="frequencies">How often each live network occurs in the sample.</param>
    /// <param name="liveGenotypesUpper">An upper bound of the space's live genotypes.</param>
    public static NetworkCountEstimate From(IReadOnlyCollection<long> frequencies, double liveGenotypesUpper, double z = Spaces.Chao1.Z95)
    {
        var chao = Spaces.Chao1.Estimate(frequencies, z);
        var missing = GoodTuring.Estimate(chao.Sample, chao.Singletons, chao.Doubletons, z);
        var upper = Math.Min(liveGenotypesUpper, chao.Observed + missing.Upper * liveGenotypesUpper);
        // With no singleton and no doubleton the missing mass's normal interval has no width, though a small
        // sample can still have missed networks: then the upper end is Chao1's own.
        if (missing.Upper == missing.Lower) upper = Math.Max(upper, Math.Min(liveGenotypesUpper, chao.Upper));
        upper = Math.Max(upper, chao.Observed);
        var maybeAllSeen = missing.Lower <= 0;
        var value = Math.Min(chao.Estimate, upper);
        var lower = Math.Min(maybeAllSeen ? chao.Observed : chao.Lower, value);
        return new NetworkCountEstimate(new Bounded(value, lower, upper), chao, missing, liveGenotypesUpper, maybeAllSeen);
    }
}
