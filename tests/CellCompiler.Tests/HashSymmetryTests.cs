using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Highly symmetric genotypes at the contract's limits (many identical parallel branches, crossing
/// branches, deep hierarchies of symmetric motifs, up to 100,000 expanded ops) hash exactly: the
/// search never reaches its budget, renumbered spellings hash equal, and changes at positions that
/// a symmetry maps onto each other hash equal while changes it cannot relate differ. Their timing
/// is measured by HashBenchmarks, never asserted here.
/// </summary>
public sealed class HashSymmetryTests
{
    public static IEnumerable<object[]> Cases() => HashStressGenotypes.All().Select(c => new object[] { c.Name });

    private static Genotype Case(string name)
    {
        var json = HashStressGenotypes.All().Single(c => c.Name == name).Json;
        return GenotypeReader.Parse(json, name, name);
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void SymmetricGenotypesHashExactlyAndIgnoreNumbering(string name)
    {
        var genotype = Case(name);
        Assert.InRange(ExpansionSize.CellPrimitiveOps(genotype), 100, Limits.MaxExpandedPrimitiveOps);
        var relabelled = GenotypeDraft.From(genotype);
        var random = new Random(name.Length);
        for (var k = 0; k < relabelled.Levels.Count; k++) relabelled.Relabel(k, random);
        var other = relabelled.Parse();
        foreach (var merge in new[] { MergeMode.Concat, MergeMode.Sum })
        {
            var hashes = GenotypeHasher.Hashes(genotype, Liveness.Analyse(genotype), merge);
            Assert.True(hashes.Exact, $"{name} ({merge}) reached the search budget");
            Assert.Equal(hashes.NetworkHash, GenotypeHasher.Hashes(other, Liveness.Analyse(other), merge).NetworkHash);
        }
    }

    /// <summary>The 31 x 31 crossing cell with some crossing edges changed to sepconv3x3.</summary>
    private static string Bipartite(params (int I, int J)[] changed)
    {
        var edges = new List<string>();
        for (var i = 1; i < 32; i++)
        {
            edges.Add($"[0,{i},\"conv3x3\"]");
            for (var j = 32; j < 63; j++)
                edges.Add($"[{i},{j},\"{(changed.Contains((i, j)) ? "sepconv3x3" : "conv3x3")}\"]");
        }
        for (var j = 32; j < 63; j++) edges.Add($"[{j},63,\"identity\"]");
        var json = "{\"format\":\"genotype/1\",\"levels\":[{\"nodes\":64,\"motifs\":{\"cell\":{\"edges\":["
            + string.Join(",", edges) + "]}}}]}";
        return GenotypeHasher.Hash(GenotypeReader.Parse(json, "b", "b"));
    }

    [Fact]
    public void ChangesThatASymmetryRelatesHashEqualAndOthersDiffer()
    {
        // Every crossing edge (i, j) maps onto every other by permuting the i side and the j side,
        // so one changed edge is one network wherever it is.
        var one = Bipartite((1, 32));
        Assert.Equal(one, Bipartite((17, 50)));
        Assert.NotEqual(Bipartite(), one);
        // Two changed edges: sharing their source, sharing their target, or sharing neither are three
        // networks (the changed edges' endpoints differ in how often they meet); each is one class.
        var sameSource = Bipartite((1, 32), (1, 33));
        var sameTarget = Bipartite((1, 32), (2, 32));
        var apart = Bipartite((1, 32), (2, 33));
        Assert.Equal(sameSource, Bipartite((9, 60), (9, 41)));
        Assert.Equal(sameTarget, Bipartite((30, 45), (4, 45)));
        Assert.Equal(apart, Bipartite((5, 40), (6, 50)));
        Assert.Equal(4, new[] { sameSource, sameTarget, apart, one }.Distinct().Count());
    }
}
