using System.Text.Json;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Mutation;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc mutate` (issue 13): the standard hierarchical point mutation, uniform choices (chi-square
/// tests against the uniform distribution at significance 0.001, critical values from the upper-tail
/// chi-square table of the NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.4),
/// --distinct never returning the parent's network, meta carried over, determinism, and mutants
/// read straight back by check and compile.
/// </summary>
public sealed class MutationTests
{
    /// <summary>Upper-tail 0.001 critical values of chi-square by degrees of freedom (NIST/SEMATECH table).</summary>
    private static readonly Dictionary<int, double> Critical001 = new() { [2] = 13.816, [3] = 16.266, [6] = 22.458 };

    private const string AllConv = """
        {"format":"genotype/1","id":"pool-7","meta":{"generation":3,"note":"tidepool"},
         "levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[0,2,"conv3x3"],[1,2,"conv3x3"]]}}}]}
        """;

    private const string TwoLevels = """
        {"format":"genotype/1","id":"pool-8",
         "levels":[{"nodes":3,"motifs":{"a":{"edges":[[0,1,"conv3x3"],[1,2,"maxpool3x3"]]},"b":{"edges":[[0,2,"sepconv3x3"]]},"spare":{"edges":[[0,2,"conv1x1"]]}}},
                   {"nodes":3,"motifs":{"cell":{"edges":[[0,1,"a"],[1,2,"b"],[0,2,"identity"]]}}}]}
        """;

    private static Genotype Parse(string json) => GenotypeReader.Parse(json, "parent.json", "parent");

    private static double ChiSquare(IEnumerable<long> observed, double expected) =>
        observed.Sum(o => (o - expected) * (o - expected) / expected);

    [Fact]
    public void NewOpsAndPairsAreUniform()
    {
        // Every pair holds conv3x3, so the new op is uniform over the other 7 level-0 ops (6 df) and
        // the pair uniform over 3 (2 df). 7,000 mutants: 1,000 expected per op.
        var parent = Parse(AllConv);
        var mutator = new Mutator(new MutationOptions(Count: 7_000, Seed: 5));
        var ops = new Dictionary<string, long>();
        var pairs = new Dictionary<(int, int), long>();
        for (var n = 1; n <= 7_000; n++)
        {
            var m = mutator.Mutate(parent, "pool-7", n, "parent.json").Mutation!;
            Assert.Equal("conv3x3", m.OldOp);
            ops[m.NewOp] = ops.GetValueOrDefault(m.NewOp) + 1;
            pairs[(m.From, m.To)] = pairs.GetValueOrDefault((m.From, m.To)) + 1;
        }
        Assert.Equal(["avgpool3x3", "conv1x1", "dwconv3x3", "identity", "maxpool3x3", "none", "sepconv3x3"], ops.Keys.Order(StringComparer.Ordinal));
        var opsChi = ChiSquare(ops.Values, 1_000);
        Assert.True(opsChi < Critical001[6], $"ops: chi-square {opsChi:F2} >= {Critical001[6]} (6 df, 0.001)");
        Assert.Equal(3, pairs.Count);
        var pairsChi = ChiSquare(pairs.Values, 7_000 / 3.0);
        Assert.True(pairsChi < Critical001[2], $"pairs: chi-square {pairsChi:F2} >= {Critical001[2]} (2 df, 0.001)");
    }

    [Fact]
    public void LevelsAndUsedMotifsAreUniformAndUnusedMotifsAreNeverPicked()
    {
        // Levels 0 and 1 each half; at level 0 the used motifs a and b each half, spare never.
        // Cells (level 0 a, level 0 b, level 1 cell): 1,000, 1,000, 2,000 expected of 4,000; 2 df.
        var parent = Parse(TwoLevels);
        var mutator = new Mutator(new MutationOptions(Count: 4_000, Seed: 9));
        var picked = new Dictionary<string, long>();
        for (var n = 1; n <= 4_000; n++)
        {
            var m = mutator.Mutate(parent, "pool-8", n, "parent.json").Mutation!;
            picked[$"{m.Level}/{m.Motif}"] = picked.GetValueOrDefault($"{m.Level}/{m.Motif}") + 1;
            if (m.Level == 1) Assert.Contains(m.NewOp, new[] { "a", "b", "spare", "identity", "none" });
        }
        Assert.Equal(["0/a", "0/b", "1/cell"], picked.Keys.Order(StringComparer.Ordinal));
        var chi = ChiSquare([picked["0/a"], picked["0/b"]], 1_000) + (picked["1/cell"] - 2_000.0) * (picked["1/cell"] - 2_000.0) / 2_000;
        Assert.True(chi < Critical001[2], $"chi-square {chi:F2} >= {Critical001[2]} (2 df, 0.001): {string.Join(", ", picked)}");
    }

    [Fact]
    public void AMutantDiffersFromItsParentInExactlyTheRecordedPair()
    {
        var parent = Parse(TwoLevels);
        var mutator = new Mutator(new MutationOptions(Count: 200, Seed: 1));
        for (var n = 1; n <= 200; n++)
        {
            var result = mutator.Mutate(parent, "pool-8", n, "parent.json");
            var m = result.Mutation!;
            Assert.Equal($"pool-8-m{n:000}", result.Id);
            var mutant = result.Genotype!;
            Assert.NotEqual(m.OldOp, m.NewOp);
            Assert.Equal(m.OldOp, OpAt(parent, m.Level, m.Motif, m.From, m.To));
            Assert.Equal(m.NewOp, OpAt(mutant, m.Level, m.Motif, m.From, m.To));
            var differences = 0;
            for (var k = 0; k < parent.Levels.Count; k++)
                foreach (var motif in parent.Levels[k].Motifs)
                    for (var i = 0; i < parent.Levels[k].Nodes; i++)
                        for (var j = i + 1; j < parent.Levels[k].Nodes; j++)
                            if (OpAt(parent, k, motif.Name, i, j) != OpAt(mutant, k, motif.Name, i, j)) differences++;
            Assert.Equal(1, differences);
        }
    }

    private static string OpAt(Genotype genotype, int level, string motif, int from, int to) =>
        genotype.Levels[level].Find(motif)!.Edges.FirstOrDefault(e => e.From == from && e.To == to)?.Op ?? Primitives.None;

    [Fact]
    public void DistinctNeverReturnsTheParentsNetworkAndReportsItsRetries()
    {
        // Identity pass-throughs and a dead branch: many single changes leave the network as it is
        // (relabelling the dead pair, identity vs a second identity path) or kill the cell.
        var parents = new[]
        {
            """{"format":"genotype/1","id":"pool-a","levels":[{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"identity"],[1,3,"identity"],[0,3,"conv3x3"],[0,2,"conv1x1"]]}}}]}""",
            TwoLevels,
            AllConv,
        };
        foreach (var merge in new[] { MergeMode.Concat, MergeMode.Sum })
        {
            var retried = 0;
            var mutator = new Mutator(new MutationOptions(Count: 300, Seed: 3, Distinct: true, Merge: merge));
            foreach (var json in parents)
            {
                var parent = Parse(json);
                var parentHash = NetworkHash(parent, merge)!;
                for (var n = 1; n <= 300; n++)
                {
                    var result = mutator.Mutate(parent, parent.Id!, n, "parent.json");
                    Assert.True(result.Succeeded, result.Failure);
                    var hash = NetworkHash(result.Genotype!, merge);
                    Assert.NotNull(hash); // alive
                    Assert.NotEqual(parentHash, hash);
                    Assert.Equal(result.Retries.Total, result.Mutation!.Retries);
                    if (result.Retries.SameNetwork > 0) retried++;
                }
            }
            // The bound is exercised: some draws did give the parent's network and were drawn again.
            Assert.True(retried > 10, $"{merge}: only {retried} mutants needed a retry");
        }
    }

    private static string? NetworkHash(Genotype genotype, MergeMode merge)
    {
        var liveness = Liveness.Analyse(genotype);
        return liveness.Cell(genotype).OutputIsLive ? GenotypeHasher.NetworkHash(genotype, liveness, merge) : null;
    }

    [Fact]
    public void DistinctGivesUpWithAClearReasonWhenNoMutationChangesTheNetwork()
    {
        // One pair and the alphabet {identity, none}: the only mutation kills the cell.
        var parent = Parse("""{"format":"genotype/1","levels":[{"nodes":2,"motifs":{"cell":{"edges":[[0,1,"identity"]]}}}]}""");
        var mutator = new Mutator(new MutationOptions(Distinct: true, LevelZeroOps: ["identity", "none"], MaxTries: 50));
        var result = mutator.Mutate(parent, "lone", 1, "parent.json");
        Assert.False(result.Succeeded);
        Assert.Equal(50, result.Retries.DeadCell);
        Assert.Contains("no mutation found in 50 draws: 50 a dead cell", result.Failure, StringComparison.Ordinal);
    }

    [Fact]
    public void MetaKeepsTheParentsFieldsAndAddsParentAndMutation()
    {
        var result = new Mutator(new MutationOptions(Seed: 2)).Mutate(Parse(AllConv), "pool-7", 1, "parent.json");
        using var meta = JsonDocument.Parse(result.Genotype!.Meta!);
        var root = meta.RootElement;
        Assert.Equal(3, root.GetProperty("generation").GetInt32());
        Assert.Equal("tidepool", root.GetProperty("note").GetString());
        Assert.Equal("pool-7", root.GetProperty("parent").GetString());
        var m = root.GetProperty("mutation");
        Assert.Equal(0, m.GetProperty("level").GetInt32());
        Assert.Equal("cell", m.GetProperty("motif").GetString());
        Assert.Equal([result.Mutation!.From, result.Mutation.To], m.GetProperty("pair").EnumerateArray().Select(e => e.GetInt32()));
        Assert.Equal("conv3x3", m.GetProperty("old").GetString());
        Assert.Equal(result.Mutation.NewOp, m.GetProperty("new").GetString());

        // A mutant of a mutant names its own parent and its own mutation, once.
        var grandchild = new Mutator(new MutationOptions(Seed: 2)).Mutate(result.Genotype, result.Id, 1, "mutant");
        using var second = JsonDocument.Parse(grandchild.Genotype!.Meta!);
        Assert.Equal("pool-7-m1", second.RootElement.GetProperty("parent").GetString());
        Assert.Equal(1, second.RootElement.EnumerateObject().Count(p => p.Name == "mutation"));
        Assert.Equal("pool-7-m1-m1", grandchild.Id);
    }

    [Fact]
    public void OpsOutsideTheGenotypesVocabularyAreBadInput()
    {
        var mutator = new Mutator(new MutationOptions(LevelZeroOps: ["none", "wide7"]));
        var error = Assert.Throws<InputException>(() => mutator.Mutate(Parse(AllConv), "pool-7", 1, "parent.json"));
        Assert.Equal("--ops", error.JsonPath);
        Assert.Contains("'wide7'", error.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void TheCliIsDeterministicForASeedAndItsMutantsFeedCheckAndCompile()
    {
        using var temp = new TempFolder();
        // The fixture's valid lines (its last line names an unknown op on purpose); gen7-003 is a dead cell.
        var population = temp.Write("parents.jsonl", string.Join("\n",
            File.ReadAllLines(RepoPaths.Fixture("tidepool-population.jsonl")).Where(l => l.Trim().Length > 0 && !l.Contains("conv5x5"))) + "\n");
        var first = ProcessRunner.Cellc(["mutate", population, "--count", "3", "--seed", "42", "--distinct"], null, temp.Path);
        Assert.True(first.ExitCode == 0, first.Stderr);
        var again = ProcessRunner.Cellc(["mutate", population, "--count", "3", "--seed", "42", "--distinct"], null, temp.Path);
        Assert.Equal(first.Stdout, again.Stdout);
        var other = ProcessRunner.Cellc(["mutate", population, "--count", "3", "--seed", "43", "--distinct"], null, temp.Path);
        Assert.NotEqual(first.Stdout, other.Stdout);
        Assert.Contains("mutants of", first.Stderr, StringComparison.Ordinal);
        Assert.Contains("retried (--distinct)", first.Stderr, StringComparison.Ordinal);

        var lines = first.Stdout.TrimEnd('\n').Split('\n');
        var parents = File.ReadAllLines(population).Count(l => l.Trim().Length > 0);
        Assert.Equal(3 * parents, lines.Length);

        // Written through the atomic writer: the same bytes as stdout.
        var mutants = temp.File("mutants.jsonl");
        var written = ProcessRunner.Cellc(["mutate", population, "--count", "3", "--seed", "42", "--distinct", "-o", mutants], null, temp.Path);
        Assert.Equal(0, written.ExitCode);
        Assert.Equal("", written.Stdout);
        Assert.Equal(first.Stdout, File.ReadAllText(mutants));

        // check reads them as a population and carries meta over into its records.
        var check = ProcessRunner.Cellc(["check", mutants, "--json", "--no-cache", "--ordered"], null, temp.Path);
        Assert.True(check.ExitCode is 0 or 1, check.Stderr);
        var records = check.Stdout.TrimEnd('\n').Split('\n').Select(l => JsonDocument.Parse(l).RootElement.Clone()).ToList();
        Assert.Equal(lines.Length, records.Count);
        for (var i = 0; i < lines.Length; i++)
        {
            using var mutant = JsonDocument.Parse(lines[i]);
            Assert.Equal(mutant.RootElement.GetProperty("id").GetString(), records[i].GetProperty("id").GetString());
            Assert.NotEqual("invalid", records[i].GetProperty("status").GetString());
            Assert.Equal(mutant.RootElement.GetProperty("meta").GetProperty("parent").GetString(),
                records[i].GetProperty("meta").GetProperty("parent").GetString());
        }

        // compile takes one mutant as a genotype file.
        var one = temp.Write("one.json", lines[0]);
        var compile = ProcessRunner.Cellc(["compile", one, "--no-write", "--json"], null, temp.Path);
        Assert.True(compile.ExitCode == 0, compile.Stderr);
        using var compiled = JsonDocument.Parse(compile.Stdout);
        Assert.True(compiled.RootElement.GetProperty("params").GetInt64() > 0);
    }

    [Fact]
    public void ABadParentIsExitTwoAndNoOutputFileIsLeft()
    {
        using var temp = new TempFolder();
        var bad = temp.Write("bad.jsonl", "{\"format\":\"genotype/1\",\"id\":\"x\",\"levels\":[{\"nodes\":2,\"motifs\":{\"cell\":{\"edges\":[[0,1,\"conv9\"]]}}}]}\n");
        var output = temp.File("out.jsonl");
        var result = ProcessRunner.Cellc(["mutate", bad, "-o", output], null, temp.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("levels[0].motifs.cell.edges[0]", result.Stderr, StringComparison.Ordinal);
        Assert.False(File.Exists(output));
        Assert.DoesNotContain("   at ", result.Stderr, StringComparison.Ordinal);
    }
}
