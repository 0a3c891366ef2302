using System.Diagnostics;
using System.Globalization;
using CellCompiler.Tests.Fuzzing;
using CellCompiler.Tests.Support;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>
/// Fuzzing (issue 10): structure-aware mutations of valid genotypes, skeletons, option overrides,
/// population lines and primitive declarations, plus raw byte damage, run through every stage a
/// command runs. Every case must end as the CLI's exit 0, 1 or 2 (or an invalid record): no other
/// exception and no hang. CI runs a fixed-seed corpus of 20,000 cases; `scripts/fuzz.sh` runs a
/// longer one with any seed (CELLC_FUZZ_CASES, CELLC_FUZZ_SEED).
/// </summary>
public sealed class FuzzTests(ITestOutputHelper output)
{
    private const int CorpusCases = 20_000;
    private const int CorpusSeed = 20_261_202;

    /// <summary>No single case may take this long: a case that does is a hang (a generous bound; most take well under a millisecond).</summary>
    private static readonly TimeSpan HangAfter = TimeSpan.FromSeconds(60);

    [Fact]
    public void A_fixed_seed_corpus_ends_every_case_as_exit_0_1_or_2()
    {
        var cases = Environment.GetEnvironmentVariable("CELLC_FUZZ_CASES") is { } text ? int.Parse(text, CultureInfo.InvariantCulture) : CorpusCases;
        var seed = Environment.GetEnvironmentVariable("CELLC_FUZZ_SEED") is { } seedText ? int.Parse(seedText, CultureInfo.InvariantCulture) : CorpusSeed;

        var outcomes = new Dictionary<(string, FuzzOutcome), int>();
        var failures = new List<string>();
        var current = -1;
        var started = Stopwatch.GetTimestamp();
        var worker = new Thread(() =>
        {
            for (var n = 0; n < cases; n++)
            {
                Volatile.Write(ref started, Stopwatch.GetTimestamp());
                Volatile.Write(ref current, n);
                var fuzz = FuzzCorpus.Case(seed, n);
                try
                {
                    var outcome = fuzz.Run();
                    lock (outcomes) outcomes[(fuzz.Kind, outcome)] = outcomes.GetValueOrDefault((fuzz.Kind, outcome)) + 1;
                }
                catch (Exception e)
                {
                    lock (failures)
                        if (failures.Count < 10)
                            failures.Add($"case {n} ({fuzz.Kind}): {e.GetType().Name}: {e.Message}\n  input: {Shorten(fuzz.Input)}\n{e.StackTrace}");
                }
            }
            Volatile.Write(ref current, cases);
        }, 64 << 20) { IsBackground = true, Name = "fuzz" };
        worker.Start();

        while (!worker.Join(200))
        {
            var n = Volatile.Read(ref current);
            var elapsed = Stopwatch.GetElapsedTime(Volatile.Read(ref started));
            if (n >= 0 && n < cases && elapsed > HangAfter)
                Assert.Fail($"case {n} of seed {seed} ({FuzzCorpus.Case(seed, n).Kind}) has run for {elapsed.TotalSeconds:0} s: a hang\n  input: {Shorten(FuzzCorpus.Case(seed, n).Input)}");
        }

        foreach (var ((kind, outcome), count) in outcomes.OrderBy(p => p.Key.Item1).ThenBy(p => p.Key.Item2))
            output.WriteLine($"{kind,-16} exit {(int)outcome}: {count}");
        Assert.True(failures.Count == 0, $"{failures.Count} case(s) ended in an unexpected exception:\n{string.Join("\n\n", failures)}");
        Assert.Equal(cases, outcomes.Values.Sum());
        // The corpus must reach past validation: many cases compile (about 8% of the fixed corpus), some are dead cells.
        if (cases >= CorpusCases)
        {
            Assert.True(outcomes.Where(p => p.Key.Item2 == FuzzOutcome.Ok).Sum(p => p.Value) > cases / 20);
            Assert.True(outcomes.GetValueOrDefault(("genotype", FuzzOutcome.DeadCell)) > 0);
            Assert.True(outcomes.GetValueOrDefault(("genotype", FuzzOutcome.BadInput)) > cases / 20);
        }
    }

    /// <summary>A smaller corpus through the real process: exit 0, 1 or 2, no stack trace, nothing written on failure.</summary>
    [Fact]
    public void Fuzzed_inputs_through_the_cli_exit_0_1_or_2_without_a_stack_trace()
    {
        using var folder = new TempFolder();
        for (var n = 0; n < 60; n++)
        {
            var fuzz = FuzzCorpus.Case(CorpusSeed + 1, n);
            if (fuzz.Kind is not ("genotype" or "genotype bytes" or "population line")) continue;
            var file = folder.File(fuzz.Kind == "population line" ? $"case{n}.jsonl" : $"case{n}.json");
            if (fuzz.Kind == "genotype bytes") File.WriteAllBytes(file, Convert.FromBase64String(fuzz.Input));
            else File.WriteAllText(file, fuzz.Input);
            var model = folder.File($"case{n}.onnx");
            var result = fuzz.Kind == "population line"
                ? ProcessRunner.Cellc("check", file, "--json", "--no-cache", "--skeleton", RepoPaths.Fixture("tidepool-skeleton.json"), "--max-run-nodes", "0")
                : ProcessRunner.Cellc("compile", file, "-o", model, "--channels", "4");
            Assert.True(result.ExitCode is 0 or 1 or 2, $"case {n}: exit {result.ExitCode}\n{result.Stderr}");
            Assert.DoesNotContain("   at ", result.Stderr);
            Assert.DoesNotContain("internal error", result.Stderr);
            if (fuzz.Kind != "population line" && result.ExitCode != 0) Assert.False(File.Exists(model), $"case {n}: a model was written on exit {result.ExitCode}");
        }
    }

    private static string Shorten(string text) => text.Length <= 2000 ? text : text[..2000] + $"... ({text.Length:N0} characters)";
}
