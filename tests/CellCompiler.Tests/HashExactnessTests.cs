using System.Text;
using System.Text.Json;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Tests.Support;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>
/// Exactness of the hashes (contract section 4, issue 8): over whole enumerated spaces, genotypes
/// share a hash if and only if they are the same network. "Same network" is decided outside the
/// project by tests/reference/network_classes.py, which lowers every genotype from its JSON by the
/// contract's rules and compares the layer graphs with NetworkX's VF2 isomorphism matcher.
/// </summary>
public sealed class HashExactnessTests(ITestOutputHelper output)
{
    private const string Script = "network_classes.py";

    private static readonly string[] Fields = ["hash", "network_hash:concat", "network_hash:sum"];

    /// <summary>The spaces, each a name and its genotype documents.</summary>
    private static IEnumerable<(string Space, IEnumerable<string> Genotypes)> Spaces() =>
    [
        ("flat4-nb5", HashSpaces.Flat(4, HashSpaces.FiveOps)),
        ("flat3-all8", HashSpaces.Flat(3, Primitives.All)),
        ("flat4-sep-max", HashSpaces.Flat(4, ["none", "identity", "sepconv3x3", "maxpool3x3"])),
        ("flat4-dw", HashSpaces.Flat(4, ["none", "identity", "dwconv3x3"])),
        ("hier3-motifs", HashSpaces.Hierarchical(3, ["none", "identity", "chain", "pass", "single", "res"])),
        ("hier4-twins", HashSpaces.Hierarchical(4, ["none", "pass", "single", "chain"])),
        ("twins", HashSpaces.Twins()),
        // Declared primitives whose layers coincide with other spellings: a sepconv of two rounds is
        // two chained sepconvs; an mbconv with expand 1 and no squeeze-excitation is a dwconv followed
        // by a 1x1 conv without activation.
        ("flat3-repeat", HashSpaces.FlatDeclared(3,
            """{"s1":{"kind":"sepconv","kernel":3},"s2":{"kind":"sepconv","kernel":3,"repeat":2},"w":{"kind":"sepconv","kernel":5,"act":"silu"}}""",
            ["none", "identity", "s1", "s2", "w"])),
        ("flat3-bottleneck", HashSpaces.FlatDeclared(3,
            """{"mb":{"kind":"mbconv","kernel":3,"expand":1},"lin":{"kind":"conv","kernel":1,"act":"none"},"gate":{"kind":"mbconv","kernel":3,"expand":2,"se":0.5,"act":"hardswish"}}""",
            ["none", "identity", "dwconv3x3", "mb", "lin", "gate"])),
        ("flat4-declared", HashSpaces.FlatDeclared(4,
            """{"fz":{"kind":"factorized","kernel":3},"p5":{"kind":"maxpool","kernel":5},"r6":{"kind":"conv","kernel":3,"act":"relu6"}}""",
            ["none", "identity", "fz", "p5"])),
        ("random-flattened", HashSpaces.RandomWithFlattened(seeds: 150)),
    ];

    [Fact]
    public void TheFourNodeFiveOpSpaceHas15625Genotypes()
    {
        // NAS-Bench-201 (Dong and Yang, ICLR 2020) publishes 15,625 cells for its space: a 4-node
        // cell, 6 edges, each one of 5 ops (zero, skip, conv 1x1, conv 3x3, avg-pool 3x3), 5^6.
        Assert.Equal(15_625, HashSpaces.Flat(4, HashSpaces.FiveOps).Count());
        Assert.Equal(15_625, HashSpaces.Flat(4, HashSpaces.FiveOps).Distinct().Count());
    }

    [Fact]
    public void HashesPartitionEnumeratedSpacesExactlyAsTheNetworkXReferenceDoes()
    {
        using var temp = new TempFolder();
        var path = temp.File("cases.jsonl");
        var counts = WriteCases(path);

        var verdicts = PythonReference.RunJsonLines(Script, path).ToDictionary(v => v.GetProperty("field").GetString()!);
        Assert.Equal(Fields.Order(), verdicts.Keys.Order());
        foreach (var field in Fields)
        {
            var v = verdicts[field];
            output.WriteLine($"{field} ({v.GetProperty("merge")}): {v}");
            Assert.Equal(counts.Values.Sum(), v.GetProperty("genotypes").GetInt32());
            Assert.True(v.GetProperty("split_classes").GetInt32() == 0,
                $"{field}: one network carries several hashes, e.g. {v.GetProperty("split_examples")}");
            Assert.True(v.GetProperty("shared_hashes").GetInt32() == 0,
                $"{field}: several networks share one hash, e.g. {v.GetProperty("shared_examples")}");
        }

        // The partition must be far from trivial for the check to mean anything: many genotypes per
        // network (spellings that must coincide) and many networks (that must stay apart).
        var concat = verdicts["hash"].GetProperty("spaces").GetProperty("flat4-nb5");
        var sum = verdicts["network_hash:sum"].GetProperty("spaces").GetProperty("flat4-nb5");
        Assert.Equal(15_625, concat.GetProperty("genotypes").GetInt32());
        Assert.InRange(concat.GetProperty("networks").GetInt32(), 1_000, concat.GetProperty("live").GetInt32() - 1_000);
        // Flattening nested sums only merges classes.
        Assert.True(sum.GetProperty("networks").GetInt32() < concat.GetProperty("networks").GetInt32());
    }

    [Fact]
    public void TheReferenceHoldsTheContractIdentitiesOfDeclaredPrimitives()
    {
        // The reference must stay valid once declared primitives (contract 3.1) reach the hash.
        var result = PythonReference.RunJsonLines(Script, "--self-test");
        Assert.Equal("ok", Assert.Single(result).GetProperty("self_test").GetString());
    }

    private static Dictionary<string, int> WriteCases(string path)
    {
        var counts = new Dictionary<string, int>();
        using var stream = File.Create(path);
        using var writer = new Utf8JsonWriter(stream);
        foreach (var (space, genotypes) in Spaces())
        {
            var n = 0;
            foreach (var json in genotypes)
            {
                var id = $"{space}-{++n}";
                var genotype = GenotypeReader.Parse(json, id, id);
                var liveness = Liveness.Analyse(genotype);
                var sum = GenotypeHasher.Hashes(genotype, liveness, MergeMode.Sum);
                var concat = GenotypeHasher.Hashes(genotype, liveness, MergeMode.Concat);
                Assert.True(sum.Exact && concat.Exact, $"{id}: the search budget was reached");
                Assert.Equal(sum.Hash, concat.NetworkHash);
                Assert.Equal(GenotypeHasher.Hash(genotype), concat.Hash);

                writer.WriteStartObject();
                writer.WriteString("id", id);
                writer.WriteString("space", space);
                writer.WritePropertyName("genotype");
                writer.WriteRawValue(json);
                writer.WriteStartObject("hashes");
                writer.WriteString("hash", concat.Hash);
                writer.WriteString("network_hash:concat", concat.NetworkHash);
                writer.WriteString("network_hash:sum", sum.NetworkHash);
                writer.WriteEndObject();
                writer.WriteEndObject();
                writer.Flush();
                writer.Reset();
                stream.Write("\n"u8);
            }
            counts[space] = n;
        }
        return counts;
    }
}
