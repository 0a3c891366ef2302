using System.Text.Json;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Spaces;
using CellCompiler.Tests.Support;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>
/// Exact enumeration of spaces (issue 13) against the independent reference: every genotype of each
/// space is written out and tests/reference/network_classes.py (which lowers each genotype from its
/// JSON by the contract's rules and decides "same network" with NetworkX's VF2 isomorphism matcher,
/// sharing no code with the C# hasher) counts the dead cells and the distinct live networks per
/// space. SpaceEnumerator's parallel, streamed counts must equal them, under both merge modes.
/// </summary>
public sealed class SpaceEnumerationTests(ITestOutputHelper output)
{
    private const string Script = "network_classes.py";

    private static readonly (string Name, string Json)[] Spaces =
    [
        ("flat4-five", SpaceFiles.Flat4Five),
        ("flat3-all", SpaceFiles.Flat3All),
        ("flat4-three", SpaceFiles.Flat4Three),
        ("flat4-four", SpaceFiles.Flat4Four),
        ("two-levels", SpaceFiles.TwoLevels),
        ("declared", SpaceFiles.Declared),
    ];

    [Fact]
    public void EnumeratedCountsEqualTheNetworkXReferenceUnderBothMergeModes()
    {
        using var temp = new TempFolder();
        var path = temp.File("cases.jsonl");
        WriteCases(path);
        var verdicts = PythonReference.RunJsonLines(Script, path).ToDictionary(v => v.GetProperty("field").GetString()!);

        foreach (var (field, merge) in new[] { ("network_hash:concat", MergeMode.Concat), ("network_hash:sum", MergeMode.Sum) })
        {
            var spaces = verdicts[field].GetProperty("spaces");
            foreach (var (name, json) in Spaces)
            {
                var space = SpaceFiles.Parse(json, name);
                var counted = SpaceEnumerator.Run(space, merge, workers: 2);
                var reference = spaces.GetProperty(name);
                output.WriteLine($"{name} {merge}: ours {counted.Genotypes} genotypes, {counted.Dead} dead, {counted.Networks} networks; reference {reference}");
                Assert.Equal((long)space.Genotypes, counted.Genotypes);
                Assert.Equal(reference.GetProperty("genotypes").GetInt64(), counted.Genotypes);
                Assert.Equal(reference.GetProperty("dead").GetInt64(), counted.Dead);
                Assert.Equal(reference.GetProperty("networks").GetInt64(), counted.Networks);
                Assert.Equal(0, counted.InexactHashes);
            }
        }

        // The spaces must be far from trivial for the comparison to mean anything: many spellings
        // per network, many networks, dead cells, and sums that merge classes concat keeps apart.
        var five = verdicts["network_hash:concat"].GetProperty("spaces").GetProperty("flat4-five");
        Assert.InRange(five.GetProperty("networks").GetInt64(), 1_000, five.GetProperty("live").GetInt64() - 1_000);
        Assert.True(five.GetProperty("dead").GetInt64() > 0);
        Assert.True(verdicts["network_hash:sum"].GetProperty("spaces").GetProperty("flat4-five").GetProperty("networks").GetInt64()
            < five.GetProperty("networks").GetInt64());
    }

    [Fact]
    public void TheCountsDoNotDependOnTheNumberOfWorkers()
    {
        // 36,864 genotypes in chunks: one worker and three workers must agree exactly.
        var space = SpaceFiles.Parse(SpaceFiles.TwoMotifs);
        var one = SpaceEnumerator.Run(space, MergeMode.Concat, workers: 1);
        var three = SpaceEnumerator.Run(space, MergeMode.Concat, workers: 3);
        Assert.Equal(36_864, one.Genotypes);
        Assert.Equal(one, three);
        Assert.InRange(one.Networks, 2, one.Live - 1);
    }

    [Fact]
    public void ProgressReachesTheTotal()
    {
        var space = SpaceFiles.Parse(SpaceFiles.Flat4Four);
        var reports = new List<long>();
        SpaceEnumerator.Run(space, MergeMode.Concat, workers: 2, reports.Add, TimeSpan.FromMilliseconds(1));
        Assert.Equal(4_096, reports[^1]);
        Assert.Equal(reports.Order(), reports);
    }

    /// <summary>Every genotype of every space, in index order, with its network hashes under both merge modes.</summary>
    private static void WriteCases(string path)
    {
        using var stream = File.Create(path);
        using var writer = new Utf8JsonWriter(stream);
        foreach (var (name, json) in Spaces)
        {
            var space = SpaceFiles.Parse(json, name);
            var cursor = new SpaceCursor(space);
            var n = 0;
            do
            {
                var genotype = cursor.Current;
                var liveness = Liveness.Analyse(genotype);
                writer.WriteStartObject();
                writer.WriteString("id", $"{name}-{n++}");
                writer.WriteString("space", name);
                writer.WritePropertyName("genotype");
                writer.WriteRawValue(GenotypeJson.Serialize(genotype));
                writer.WriteStartObject("hashes");
                writer.WriteString("network_hash:concat", GenotypeHasher.NetworkHash(genotype, liveness, MergeMode.Concat));
                writer.WriteString("network_hash:sum", GenotypeHasher.NetworkHash(genotype, liveness, MergeMode.Sum));
                writer.WriteEndObject();
                writer.WriteEndObject();
                writer.Flush();
                writer.Reset();
                stream.Write("\n"u8);
            } while (cursor.Advance());
        }
    }
}
