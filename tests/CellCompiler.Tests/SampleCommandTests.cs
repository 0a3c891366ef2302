using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Sampling;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>`cellc sample` (issue 4) through the real process, plus the library's sampler and genotype writer.</summary>
public sealed class SampleCommandTests
{
    private static readonly string[] LevelZeroOps =
        ["none", "identity", "conv1x1", "conv3x3", "dwconv3x3", "sepconv3x3", "maxpool3x3", "avgpool3x3"];

    private static string Sample(params string[] args)
    {
        var result = ProcessRunner.Cellc(["sample", .. args], null, null);
        Assert.True(result.ExitCode == 0, $"cellc sample failed with exit code {result.ExitCode}:\n{result.Stderr}");
        Assert.Equal("", result.Stderr);
        return result.Stdout;
    }

    private static List<string> Lines(string stdout)
    {
        Assert.EndsWith("\n", stdout);
        Assert.DoesNotContain("\r", stdout);
        return stdout[..^1].Split('\n').ToList();
    }

    private static Genotype Parse(string line) => GenotypeReader.Parse(line, "sample", "sample");

    private static string WithoutId(string line)
    {
        using var document = JsonDocument.Parse(line);
        return JsonSerializer.Serialize(document.RootElement.GetProperty("levels"));
    }

    /// <summary>Counts of each op over every pair of every motif; unlisted pairs count as none.</summary>
    private static Dictionary<string, long> OpCounts(IEnumerable<Genotype> genotypes)
    {
        var counts = new Dictionary<string, long>();
        foreach (var genotype in genotypes)
        foreach (var level in genotype.Levels)
        foreach (var motif in level.Motifs)
        {
            var pairs = level.Nodes * (level.Nodes - 1) / 2;
            counts["none"] = counts.GetValueOrDefault("none") + pairs - motif.Edges.Count;
            foreach (var edge in motif.Edges)
                counts[edge.Op] = counts.GetValueOrDefault(edge.Op) + 1;
        }
        return counts;
    }

    private static void AssertSameStructure(Genotype expected, Genotype actual)
    {
        Assert.Equal(expected.Name, actual.Name);
        Assert.Equal(expected.Id, actual.Id);
        Assert.Equal(expected.Levels.Count, actual.Levels.Count);
        for (var k = 0; k < expected.Levels.Count; k++)
        {
            Assert.Equal(expected.Levels[k].Nodes, actual.Levels[k].Nodes);
            Assert.Equal(expected.Levels[k].Motifs.Select(m => m.Name), actual.Levels[k].Motifs.Select(m => m.Name));
            for (var m = 0; m < expected.Levels[k].Motifs.Count; m++)
                Assert.Equal(expected.Levels[k].Motifs[m].Edges, actual.Levels[k].Motifs[m].Edges); // Edge is a record: from, to, op, index
        }
    }

    [Fact]
    public void The_same_seed_gives_identical_bytes_and_another_seed_differs()
    {
        string[] shape = ["--levels", "4,5", "--motifs", "6,1", "--count", "200"];
        var first = Sample([.. shape, "--seed", "42"]);
        var again = Sample([.. shape, "--seed", "42"]);
        Assert.Equal(first, again);

        var other = Lines(Sample([.. shape, "--seed", "43"])).Select(WithoutId).ToList();
        var mine = Lines(first).Select(WithoutId).ToList();
        // Ids differ by construction, so compare the genotypes themselves: hardly any should coincide.
        var same = mine.Zip(other).Count(pair => pair.First == pair.Second);
        Assert.True(same < 5, $"{same} of 200 genotypes are equal between seeds 42 and 43");
    }

    [Fact]
    public void Count_50_gives_50_valid_lines_of_the_requested_shape_with_unique_ids()
    {
        var lines = Lines(Sample("--levels", "4,5", "--motifs", "6,1", "--count", "50", "--seed", "7"));
        Assert.Equal(50, lines.Count);

        var genotypes = lines.Select(Parse).ToList();
        var ids = genotypes.Select(g => g.Id).ToList();
        Assert.Equal(50, ids.Distinct().Count());
        Assert.Equal(Enumerable.Range(1, 50).Select(n => $"s7-{n:D2}"), ids);
        foreach (var (line, genotype) in lines.Zip(genotypes))
        {
            // Compact, the id first, exactly the three fields of the design.
            Assert.StartsWith($"{{\"id\":\"{genotype.Id}\",\"format\":\"genotype/1\",\"levels\":[", line);
            Assert.DoesNotContain(" ", line);
            Assert.Equal([4, 5], genotype.Levels.Select(l => l.Nodes));
            Assert.Equal([6, 1], genotype.Levels.Select(l => l.Motifs.Count));
            Assert.Equal(["m0_0", "m0_1", "m0_2", "m0_3", "m0_4", "m0_5"], genotype.Levels[0].Motifs.Select(m => m.Name));
            Assert.Equal("cell", genotype.Cell.Name);
            foreach (var level in genotype.Levels)
            foreach (var motif in level.Motifs)
            {
                Assert.DoesNotContain(motif.Edges, e => e.Op == "none");
                // Pairs in order (i, then j), each at most once.
                var pairs = motif.Edges.Select(e => (e.From, e.To)).ToList();
                Assert.Equal(pairs.OrderBy(p => p.From).ThenBy(p => p.To), pairs);
            }
        }
    }

    [Fact]
    public void None_weight_0_lists_every_pair_of_every_motif()
    {
        var genotypes = Lines(Sample("--levels", "4,5,3", "--motifs", "6,3,1", "--count", "30", "--none-weight", "0"))
            .Select(Parse).ToList();
        Assert.Equal(30, genotypes.Count);
        foreach (var genotype in genotypes)
        foreach (var level in genotype.Levels)
        foreach (var motif in level.Motifs)
            Assert.Equal(level.Nodes * (level.Nodes - 1) / 2, motif.Edges.Count);
        // Every op of each level's alphabet (none excluded) turns up.
        var counts = OpCounts(genotypes);
        Assert.Equal(0, counts["none"]);
        foreach (var op in LevelZeroOps.Skip(1).Concat(["m0_0", "m0_5", "m1_0", "m1_2"]))
            Assert.True(counts.GetValueOrDefault(op) > 0, $"{op} never drawn");
    }

    [Fact]
    public void Ops_are_uniform_over_the_level_zero_alphabet()
    {
        var genotypes = Lines(Sample("--levels", "6", "--motifs", "1", "--count", "2000", "--seed", "3")).Select(Parse).ToList();
        var counts = OpCounts(genotypes);
        const double draws = 2000 * 15; // 15 pairs per 6-node motif
        Assert.Equal(draws, counts.Values.Sum());
        Assert.Equal(LevelZeroOps.Order(), counts.Keys.Order());
        // Each op is a binomial count over 30,000 draws with p = 1/8 (none has weight 1 like the other
        // seven ops): standard error sqrt(p(1-p)/n) = sqrt(0.125 * 0.875 / 30000) ~ 0.0019, so +-0.01 is
        // over 5 standard errors (a correct sampler misses it with probability ~1e-7 per op). The output is
        // fixed by the seed, so the test cannot flake; a biased draw (e.g. none twice as likely) fails it.
        foreach (var op in LevelZeroOps)
            Assert.InRange(counts[op] / draws, 0.125 - 0.01, 0.125 + 0.01);
    }

    [Fact]
    public void None_weight_3_gives_none_three_tenths_of_the_draws()
    {
        var genotypes = Lines(Sample("--levels", "6", "--motifs", "1", "--count", "2000", "--none-weight", "3"))
            .Select(Parse).ToList();
        var counts = OpCounts(genotypes);
        const double draws = 2000 * 15;
        // Weight 3 for none against 1 for each of 7 ops: none 3/10, each op 1/10. Standard error of the
        // none share sqrt(0.3 * 0.7 / 30000) ~ 0.0026, so +-0.01 is almost 4 standard errors (fixed seed).
        Assert.InRange(counts["none"] / draws, 0.3 - 0.01, 0.3 + 0.01);
        foreach (var op in LevelZeroOps.Skip(1))
            Assert.InRange(counts[op] / draws, 0.1 - 0.01, 0.1 + 0.01);
    }

    [Fact]
    public void Output_file_holds_the_same_bytes_as_stdout_and_no_temporary_file_is_left()
    {
        using var folder = new TempFolder();
        var path = folder.File("population.jsonl");
        string[] args = ["--levels", "3,4", "--motifs", "2,1", "--count", "120", "--seed", "5"];
        var result = ProcessRunner.Cellc(["sample", .. args, "-o", path], null, null);
        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.Equal("", result.Stdout);
        Assert.Equal(Sample(args), File.ReadAllText(path));
        Assert.Equal([path], Directory.GetFiles(folder.Path));
    }

    [Theory]
    [InlineData("--motifs", "--levels", "4,5", "--motifs", "6,2", "--count", "5")]         // the last level must hold 1 motif
    [InlineData("--levels", "--levels", "1", "--count", "5")]                               // fewer than 2 nodes
    [InlineData("--levels", "--levels", "4,65", "--motifs", "2,1", "--count", "5")]         // more than 64 nodes
    [InlineData("--levels", "--levels", "2,2,2,2,2,2,2,2,2", "--count", "5")]              // 9 levels
    [InlineData("--levels", "--levels", "4,x", "--count", "5")]                             // not a number
    [InlineData("--motifs", "--levels", "4,5", "--motifs", "6", "--count", "5")]           // mismatched lengths
    [InlineData("--motifs", "--levels", "4,5", "--motifs", "257,1", "--count", "5")]       // more than 256 motifs
    [InlineData("--count", "--levels", "4,5", "--motifs", "6,1", "--count", "0")]
    [InlineData("--count", "--levels", "4,5", "--motifs", "6,1", "--count", "10000001")]
    [InlineData("--none-weight", "--levels", "4", "--count", "5", "--none-weight", "-1")]
    [InlineData("--levels", "--levels", "30,30", "--motifs", "2,1", "--count", "1")]       // expanded cell could exceed 100,000 ops
    [InlineData("--motifs", "--levels", "24,24", "--motifs", "256,1", "--count", "1")]     // a line could exceed 1 MiB
    public void Bad_options_exit_2_naming_the_option(string option, params string[] args)
    {
        var result = ProcessRunner.Cellc(["sample", .. args], null, null);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains(option, result.Stderr);
        Assert.Equal("", result.Stdout);
    }

    [Fact]
    public void Written_genotypes_read_back_to_the_same_structure()
    {
        // Sampled genotypes: the name is the id, so no name field is written.
        var sampler = new GenotypeSampler([4, 5, 3], [6, 2, 1], noneWeight: 1, seed: 11);
        foreach (var genotype in sampler.Sample(40))
        {
            var json = GenotypeJson.Serialize(genotype);
            Assert.DoesNotContain("\"name\"", json);
            AssertSameStructure(genotype, Parse(json));
        }
        // Other genotypes: a name and no id, shuffled edge order, listed none edges, unused motifs.
        for (var seed = 0; seed < 100; seed++)
        {
            var genotype = RandomGenotypes.Parse(seed);
            AssertSameStructure(genotype, Parse(GenotypeJson.Serialize(genotype)));
            AssertSameStructure(genotype with { Id = "x-1" }, Parse(GenotypeJson.Serialize(genotype, "x-1")));
        }
    }

    [Fact]
    public void A_genotype_depends_only_on_its_seed_and_number()
    {
        static string Levels(Genotype g) => GenotypeJson.Serialize(g with { Name = "x", Id = "x" });
        var sampler = new GenotypeSampler([4, 5], [6, 1], seed: 9);
        var listed = sampler.Sample(30).ToList();
        Assert.Equal(Levels(listed[16]), Levels(sampler.Sample(17, "other")));
        Assert.NotEqual(Levels(listed[16]), Levels(listed[15]));
        // A longer run starts with the same genotypes (only the id's padding changes).
        var longer = sampler.Sample(1000).Take(30).ToList();
        Assert.Equal(listed.Select(Levels), longer.Select(Levels));
    }

    [Theory]
    [InlineData(new[] { 4, 5 }, new[] { 6, 1 })]
    [InlineData(new[] { 11 }, new[] { 1 })]
    [InlineData(new[] { 64 }, new[] { 1 })]
    [InlineData(new[] { 12, 16, 3 }, new[] { 150, 12, 1 })]
    [InlineData(new[] { 2, 2, 2, 2, 2, 2, 2, 2 }, new[] { 256, 256, 256, 256, 256, 256, 256, 1 })]
    public void The_worst_case_line_size_is_exact(int[] nodes, int[] motifs)
    {
        // The bound must equal the size of the largest line: every pair listed with the longest op of its level.
        var levels = new List<Level>();
        for (var k = 0; k < nodes.Length; k++)
        {
            var longest = k == 0 ? "sepconv3x3"
                : new[] { "identity", GenotypeSampler.MotifName(k - 1, motifs[k - 1] - 1, nodes.Length) }.MaxBy(s => s.Length)!;
            var motifList = Enumerable.Range(0, motifs[k]).Select(m =>
            {
                var edges = new List<Edge>();
                for (var i = 0; i < nodes[k] - 1; i++)
                for (var j = i + 1; j < nodes[k]; j++)
                    edges.Add(new Edge(i, j, longest, edges.Count));
                return new Motif(GenotypeSampler.MotifName(k, m, nodes.Length), edges);
            }).ToList();
            levels.Add(new Level(nodes[k], motifList));
        }
        var id = new string('7', GenotypeSampler.MaxIdLength);
        var worst = new Genotype(id, levels, id);
        var bytes = System.Text.Encoding.UTF8.GetByteCount(GenotypeJson.Serialize(worst));
        Assert.Equal(bytes, GenotypeSampler.WorstCaseJsonBytes(nodes, motifs, id.Length));
    }

    [Fact]
    public void Genotypes_at_the_edge_of_the_limits_pass_the_reader()
    {
        // 26 nodes would give 325 * 325 > 100,000; 25 gives 300 * 300 = 90,000. 130 motifs of 300 edges stay under 1 MiB.
        Assert.Null(GenotypeSampler.Check([25, 25], [130, 1], 0));
        Assert.NotNull(GenotypeSampler.Check([26, 26], [1, 1], 0));
        var sampler = new GenotypeSampler([25, 25], [130, 1], noneWeight: 0, seed: 1);
        foreach (var genotype in sampler.Sample(3))
        {
            var json = GenotypeJson.Serialize(genotype);
            Assert.True(json.Length <= Limits.MaxJsonBytes, $"{json.Length} bytes");
            // Identity edges of the cell count 1, motif edges the motif's 300: close to, never above, 90,000.
            Assert.InRange(ExpansionSize.CellPrimitiveOps(Parse(json)), 80_000, 90_000);
        }
    }
}
