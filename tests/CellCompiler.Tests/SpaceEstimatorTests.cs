using CellCompiler.Input;
using CellCompiler.Spaces;

namespace CellCompiler.Tests;

/// <summary>
/// The estimate of distinct networks (issue 13): Chao1 (Chao 1984) with its variance and log-normal
/// 95% interval (Chao 1987) for the value and the lower end, and a Good-Turing bound (Good 1953,
/// Esty 1983) for the upper end. Run on every enumerable test space with a few thousand uniform
/// samples, the interval must hold the exact count found by enumeration in at least 9 of 10 seeds.
/// The formulas are checked against worked examples computed by hand from the published formulas
/// (below), not against this code.
/// </summary>
public sealed class SpaceEstimatorTests
{
    /// <summary>
    /// Every space of <see cref="SpaceFiles"/>, both merge modes. The 15,625-genotype space is the one
    /// where Chao1's own interval held the exact count in only 2 of 10 seeds (a few networks spelled by
    /// thousands of genotypes, many by one), so it is the case that matters.
    /// </summary>
    public static TheoryData<string, MergeMode, int> Spaces
    {
        get
        {
            var data = new TheoryData<string, MergeMode, int>();
            foreach (var merge in new[] { MergeMode.Concat, MergeMode.Sum })
            {
                data.Add(nameof(SpaceFiles.Flat3All), merge, 2_000);
                data.Add(nameof(SpaceFiles.Flat4Three), merge, 2_000);
                data.Add(nameof(SpaceFiles.Flat4Four), merge, 2_000);
                data.Add(nameof(SpaceFiles.Flat4Five), merge, 3_000);
                data.Add(nameof(SpaceFiles.TwoLevels), merge, 2_000);
                data.Add(nameof(SpaceFiles.TwoMotifs), merge, 3_000);
                data.Add(nameof(SpaceFiles.Declared), merge, 2_000);
            }
            return data;
        }
    }

    [Theory]
    [MemberData(nameof(Spaces))]
    public void TheIntervalHoldsTheExactCountInAtLeastNineOfTenSeeds(string spaceName, MergeMode merge, int samples)
    {
        var space = SpaceFiles.Parse(SpaceFiles.ByName(spaceName));
        var exact = SpaceEnumerator.Run(space, merge, workers: 2);
        var hits = 0;
        var misses = new List<string>();
        for (var seed = 1; seed <= 10; seed++)
        {
            var survey = SpaceSurveyor.Run(space, Skeleton(merge), new SurveyOptions(EnumerateLimit: 0, Samples: samples, Seed: seed, Workers: 2));
            var networks = survey.Networks;
            Assert.InRange(networks.Value, networks.Lower, networks.Upper);
            if (networks.Lower <= exact.Networks && exact.Networks <= networks.Upper) hits++;
            else misses.Add($"seed {seed}: {networks.Value:F1} [{networks.Lower:F1}, {networks.Upper:F1}]");
        }
        Assert.True(hits >= 9, $"exact {exact.Networks}; {hits}/10 intervals hold it; misses: {string.Join("; ", misses)}");
    }

    [Fact]
    public void OnTheSkewedSpaceChao1AloneReadsLowAndTheUpperEndRescuesTheInterval()
    {
        // The 15,625-genotype space under concat merges: 6,333 networks (enumerated; the NetworkX
        // canonical form agrees, SpaceEnumerationTests). 3,000 samples of seed 3 see 1,380 of them;
        // Chao1 says 4,106 with an interval ending at 4,662, well short; the Good-Turing upper end
        // (about 7,270) holds the count.
        var space = SpaceFiles.Parse(SpaceFiles.Flat4Five);
        var survey = SpaceSurveyor.Run(space, Skeleton(MergeMode.Concat), new SurveyOptions(EnumerateLimit: 0, Samples: 3_000, Seed: 3, Workers: 2));
        var estimate = survey.Estimate!;
        Assert.True(estimate.Chao1.Upper < 6_333, $"Chao1 interval [{estimate.Chao1.Lower:F0}, {estimate.Chao1.Upper:F0}]");
        Assert.InRange(6_333, survey.Networks.Lower, survey.Networks.Upper);
        // The bound is near: the networks missed are mostly spelled once (7,268 here, 15% above the count).
        Assert.True(survey.Networks.Upper < 1.3 * 6_333, $"upper end {survey.Networks.Upper:F0}");
        Assert.Equal(estimate.Chao1.Estimate, survey.Networks.Value);
        Assert.False(estimate.MaybeAllSeen);
    }

    [Fact]
    public void GoodTuringMatchesAHandComputedExample()
    {
        // Frequencies 1,1,1,1,2,2,3,5: n = 16, f1 = 4, f2 = 2. Missing mass f1/n = 0.25 (Good 1953);
        // standard error sqrt(f1 + 2 f2 - f1^2/n)/n = sqrt(7)/16 = 0.1653595 (Esty 1983);
        // interval 0.25 -/+ 1.959964 * 0.1653595 = 0.25 -/+ 0.3240986: [0, 0.5740986].
        var mass = GoodTuring.Estimate(16, 4, 2);
        Assert.Equal(0.25, mass.Estimate, 12);
        Assert.Equal(0, mass.Lower);
        Assert.Equal(0.5740986, mass.Upper, 6);

        // With at most 20 live genotypes: upper end 8 + 0.5740986 * 20 = 19.48197; the missing mass
        // may be 0, so the lower end is the 8 networks seen; the value stays Chao1's 11.75.
        var wide = NetworkCountEstimate.From([1, 1, 1, 1, 2, 2, 3, 5], 20);
        Assert.True(wide.MaybeAllSeen);
        Assert.Equal(11.75, wide.Networks.Value, 9);
        Assert.Equal(8, wide.Networks.Lower);
        Assert.Equal(19.48197, wide.Networks.Upper, 4);

        // With at most 10 live genotypes there cannot be 11.75 networks: value and upper end are 10.
        var capped = NetworkCountEstimate.From([1, 1, 1, 1, 2, 2, 3, 5], 10);
        Assert.Equal(10, capped.Networks.Value, 9);
        Assert.Equal(10, capped.Networks.Upper, 9);
        Assert.Equal(8, capped.Networks.Lower);
    }

    [Fact]
    public void WhenSomethingIsSurelyMissingTheLowerEndIsChao1s()
    {
        // 20 networks seen once, 5 twice, 10 three times: n = 60, S_obs = 35. Missing mass 1/3,
        // standard error sqrt(20 + 10 - 400/60)/60 = 0.0805076, interval [0.1755, 0.4911]: above 0.
        // Chao1: 35 + (59/60) * 400 / 10 = 74.3333. Upper end with 100 live genotypes:
        // 35 + 0.4911254 * 100 = 84.11254.
        long[] frequencies = [.. Enumerable.Repeat(1L, 20), .. Enumerable.Repeat(2L, 5), .. Enumerable.Repeat(3L, 10)];
        var e = NetworkCountEstimate.From(frequencies, 100);
        Assert.False(e.MaybeAllSeen);
        Assert.Equal(0.1755, e.Missing.Lower, 4);
        Assert.Equal(74.3333, e.Networks.Value, 4);
        Assert.Equal(e.Chao1.Lower, e.Networks.Lower);
        Assert.True(e.Networks.Lower > 35);
        Assert.Equal(84.11254, e.Networks.Upper, 4);
    }

    [Fact]
    public void WilsonsIntervalIsExactAtNoneAndAtAll()
    {
        // Wilson (1927) at 0 of n successes: [0, z^2 / (n + z^2)]; at 300 samples 3.841459 / 303.841459 = 0.0126429.
        var none = SpaceSurveyor.Wilson(0, 300);
        Assert.Equal(0, none.Lower);
        Assert.Equal(0.0126429, none.Upper, 6);
        var all = SpaceSurveyor.Wilson(300, 300);
        Assert.Equal(1, all.Upper);
        Assert.Equal(1 - 0.0126429, all.Lower, 6);
    }

    [Fact]
    public void WithoutSingletonsTheUpperEndIsStillChao1s()
    {
        // Three samples of one network: f1 = f2 = 0, so the missing mass's normal interval has no width;
        // the interval must still allow for what three samples cannot see (Chao1's own upper end).
        var e = NetworkCountEstimate.From([3], 1_000);
        Assert.Equal(1, e.Networks.Value);
        Assert.Equal(e.Chao1.Upper, e.Networks.Upper);
        Assert.True(e.Networks.Upper > 1, $"upper end {e.Networks.Upper}");
    }

    private static Skeleton Skeleton(MergeMode merge) => SkeletonPresets.All["proxy"] with { Merge = merge };

    [Fact]
    public void ClassicChao1MatchesAHandComputedExample()
    {
        // Frequencies 1,1,1,1,2,2,3,5: n = 16, S_obs = 8, f1 = 4, f2 = 2.
        // S = 8 + (15/16) * 16 / 4 = 11.75; with r = f1/f2 = 2 and a = 15/16 the variance is
        // f2 (a r^2/2 + a^2 r^3 + a^2 r^4 / 4) = 2 (1.875 + 7.03125 + 3.515625) = 24.84375;
        // T = 3.75, K = exp(1.96 sqrt(ln(1 + 24.84375 / 14.0625))) = exp(1.96 * 1.00879) ~ 7.2223,
        // interval [8 + 3.75/K, 8 + 3.75 K] = [8.5192, 35.084]. (Arithmetic by hand and a calculator, from Chao 1987.)
        var e = Chao1.Estimate([1, 1, 1, 1, 2, 2, 3, 5]);
        Assert.Equal(Chao1Form.Classic, e.Form);
        Assert.Equal(11.75, e.Estimate, 9);
        Assert.Equal(24.84375, e.Variance, 9);
        Assert.Equal(8.5192, e.Lower, 3);
        Assert.Equal(35.084, e.Upper, 2);
    }

    [Fact]
    public void WithoutDoubletonsTheBiasCorrectedFormIsUsed()
    {
        // f1 = 3, f2 = 0, n = 7 (1,1,1,4): S = 4 + (6/7) * 3 * 2 / 2 = 6.5714...
        var e = Chao1.Estimate([1, 1, 1, 4]);
        Assert.Equal(Chao1Form.BiasCorrected, e.Form);
        Assert.Equal(4 + 6.0 / 7 * 3, e.Estimate, 9);
        Assert.True(e.Lower >= 4 && e.Lower < e.Estimate && e.Upper > e.Estimate);
    }

    [Fact]
    public void AFullyCoveredSampleEstimatesWhatItSaw()
    {
        var e = Chao1.Estimate([3, 4, 5, 6, 9]);
        Assert.Equal(Chao1Form.Observed, e.Form);
        Assert.Equal(5, e.Estimate);
        Assert.Equal(5, e.Lower);
        Assert.True(e.Upper >= 5 && e.Upper < 6);
    }

    [Fact]
    public void SamplesDoNotDependOnTheNumberOfWorkers()
    {
        var space = SpaceFiles.Parse(SpaceFiles.Flat4Four);
        var one = SpaceSampler.Draw(space, MergeMode.Concat, 500, seed: 7, workers: 1);
        var two = SpaceSampler.Draw(space, MergeMode.Concat, 500, seed: 7, workers: 2);
        Assert.Equal(one.Keys, two.Keys);
        Assert.Equal(one.Dead, two.Dead);
        var other = SpaceSampler.Draw(space, MergeMode.Concat, 500, seed: 8, workers: 2);
        Assert.NotEqual(one.Keys, other.Keys);
    }

    [Fact]
    public void UniformSamplesHitEveryGenotypeAboutEquallyOften()
    {
        // 125 genotypes, 25,000 samples: 200 expected per genotype. Chi-square test at significance
        // 0.001 with 124 degrees of freedom: published tables (e.g. the NIST/SEMATECH e-Handbook of
        // Statistical Methods, 1.3.6.7.4) stop at 100 df, so the critical value comes from the
        // Wilson-Hilferty approximation (Wilson and Hilferty 1931, PNAS 17, 684-688) with z = 3.0902:
        // 124 (1 - 2/(9*124) + 3.0902 sqrt(2/(9*124)))^3 = 178.46, which the regularized incomplete
        // gamma function confirms (upper tail 0.0010 at 178.4).
        var space = SpaceFiles.Parse(SpaceFiles.Declared);
        var cursor = new SpaceCursor(space);
        var index = new Dictionary<string, int>();
        var i = 0;
        do index[GenotypeJson.Serialize(cursor.Current)] = i++; while (cursor.Advance());
        var counts = new long[125];
        for (var s = 0; s < 25_000; s++)
        {
            SpaceSampler.Seek(cursor, 11, s);
            counts[index[GenotypeJson.Serialize(cursor.Current)]]++;
        }
        var chi = counts.Sum(c => (c - 200.0) * (c - 200.0) / 200.0);
        Assert.True(chi < 178.4, $"chi-square {chi:F1} over 124 degrees of freedom");
    }
}
