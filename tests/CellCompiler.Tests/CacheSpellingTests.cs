using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Sampling;
using CellCompiler.Screening;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The cache is keyed by network_hash, so one entry answers every spelling of a network. Two
/// spellings can still differ in peak activation memory (it follows the emitted order) and file
/// size (names), and a budget can fall between them: a record must then be exactly what a run
/// without the cache gives, whichever spelling filled the cache.
/// </summary>
public sealed class CacheSpellingTests
{
    /// <summary>The first sampled genotype whose relabelled twin has another peak activation.</summary>
    private static (Genotype Big, Genotype Small) TwinsWithDifferentPeaks()
    {
        var skeleton = SkeletonPresets.All["proxy"];
        // Seven-node flat cells from the sampler (`cellc sample --levels 7`): most have several valid node orders.
        var sampler = new GenotypeSampler([7], [1], seed: 5);
        for (var seed = 1; seed < 400; seed++)
        {
            var genotype = sampler.Sample(seed, $"flat-{seed}");
            var draft = GenotypeDraft.From(genotype);
            draft.Relabel(0, new Random(seed));
            var twin = GenotypeReader.Parse(draft.ToJson(), $"twin-{seed}", $"twin-{seed}");
            long a, b;
            try
            {
                a = Compiler.Compile(genotype, skeleton).Figures.PeakActivationBytes;
                b = Compiler.Compile(twin, skeleton).Figures.PeakActivationBytes;
            }
            catch (DeadCellException) { continue; }
            if (a != b) return a > b ? (genotype, twin) : (twin, genotype);
        }
        throw new InvalidOperationException("no relabelled twin with another peak activation among 400 seeds");
    }

    private static string Comparable(CheckRecord record) =>
        CheckRecordJson.ToLine(record with { CheckMs = 0, Cached = false });

    [Fact]
    public void A_budget_between_two_spellings_gives_the_records_of_a_run_without_cache_in_either_order()
    {
        var (big, small) = TwinsWithDifferentPeaks();
        var skeleton = SkeletonPresets.All["proxy"];
        var bigPeak = Compiler.Compile(big, skeleton).Figures.PeakActivationBytes;
        var smallPeak = Compiler.Compile(small, skeleton).Figures.PeakActivationBytes;
        // A budget in MB (decimal) strictly between the two peaks: the small spelling fits, the big one does not.
        var budget = (bigPeak + smallPeak) / 2.0 / 1e6;
        foreach (var runOverBudget in new[] { false, true })
        {
            var options = new CheckOptions(skeleton, CompileOptions.Default, new Budgets(MaxActivationMB: budget), RunOverBudget: runOverBudget);
            var bigAlone = CandidateChecker.Check(Candidate.Valid("big", big), options);
            var smallAlone = CandidateChecker.Check(Candidate.Valid("small", small), options);
            Assert.Equal(CheckStatus.OverBudget, bigAlone.Status);
            Assert.Equal(CheckStatus.Ok, smallAlone.Status);
            Assert.Equal(runOverBudget, bigAlone.SmokeTested);

            foreach (var bigFirst in new[] { true, false })
            {
                using var folder = new TempFolder();
                using var cache = SqliteResultCache.Open(folder.File("cache.db"), warning => Assert.Fail(warning));
                var checker = new CandidateChecker(options, cache);
                var order = bigFirst ? new[] { ("big", big), ("small", small) } : [("small", small), ("big", big)];
                var records = order.ToDictionary(c => c.Item1, c => checker.Check(Candidate.Valid(c.Item1, c.Item2)));
                Assert.Equal(Comparable(bigAlone), Comparable(records["big"]));
                Assert.Equal(Comparable(smallAlone), Comparable(records["small"]));
                // The second spelling takes the first one's run verdict from the cache, unless the first
                // was never run (over the budget) and the second must be.
                var (first, second) = bigFirst ? (records["big"], records["small"]) : (records["small"], records["big"]);
                Assert.Equal(first.SmokeTested == true || second.SmokeTested == false, second.Cached);
            }
        }
    }
}
