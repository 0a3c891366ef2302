using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The genotype hash (contract section 4): spellings of the same network hash equal, a change of a
/// live op hashes differently. Checked on generated genotypes.
/// </summary>
public sealed class HashTests
{
    private static readonly string[] Convolutions = ["conv1x1", "conv3x3", "dwconv3x3", "sepconv3x3", "maxpool3x3", "avgpool3x3"];

    public static IEnumerable<object[]> Seeds() => Enumerable.Range(500, 220).Select(s => new object[] { s });

    private static Genotype LiveGenotype(int seed)
    {
        for (var attempt = 0; ; attempt++)
        {
            var genotype = RandomGenotypes.Parse(seed * 31 + attempt);
            if (Liveness.Analyse(genotype).Cell(genotype).OutputIsLive) return genotype;
        }
    }

    [Fact]
    public void EverySpellingOfTheSameNetworkHashesEqualAndALiveOpChangeDiffers()
    {
        var checkedCount = 0;
        var identityOnly = 0;
        foreach (var seed in Enumerable.Range(500, 260))
        {
            var genotype = LiveGenotype(seed);
            var hash = GenotypeHasher.Hash(genotype);
            var random = new Random(seed);

            // Motif names.
            var renamed = GenotypeDraft.From(genotype);
            for (var k = 0; k < renamed.Levels.Count; k++)
                foreach (var name in renamed.Levels[k].Motifs.Select(m => m.Name).ToList())
                    renamed.Rename(k, name, "zz_" + name + "_" + seed);
            Assert.Equal(hash, GenotypeHasher.Hash(renamed.Parse()));

            // Edge order.
            var shuffled = GenotypeDraft.From(genotype);
            foreach (var level in shuffled.Levels)
                foreach (var (_, edges) in level.Motifs)
                    edges.Reverse();
            Assert.Equal(hash, GenotypeHasher.Hash(shuffled.Parse()));

            // Listed `none` edges for every unlisted pair.
            var withNone = GenotypeDraft.From(genotype);
            foreach (var level in withNone.Levels)
                foreach (var (_, edges) in level.Motifs)
                    for (var j = 1; j < level.Nodes; j++)
                        for (var i = 0; i < j; i++)
                            if (!edges.Any(e => e.From == i && e.To == j)) edges.Add((i, j, "none"));
            Assert.Equal(hash, GenotypeHasher.Hash(withNone.Parse()));

            // An unused motif.
            if (genotype.Levels.Count > 1)
            {
                var extra = GenotypeDraft.From(genotype);
                extra.Levels[0].Motifs.Add(("never_used", [(0, extra.Levels[0].Nodes - 1, "conv3x3")]));
                Assert.Equal(hash, GenotypeHasher.Hash(extra.Parse()));
            }

            // Dead code: an edge into a node that cannot reach the output (if the cell has one free pair).
            var deadCode = GenotypeDraft.From(genotype);
            var cellInfo = Liveness.Analyse(genotype).Cell(genotype);
            var top = deadCode.Levels[^1];
            var cellEdges = top.Motifs[0].Edges;
            var feedsOutput = new HashSet<int>(cellInfo.LiveEdges.Select(e => e.From).Append(top.Nodes - 1));
            var target = Enumerable.Range(1, top.Nodes - 2).FirstOrDefault(v => !feedsOutput.Contains(v) && !cellEdges.Any(e => e.From == 0 && e.To == v));
            if (target > 0 && cellEdges.All(e => e.From != target || e.Op == "none"))
            {
                cellEdges.Add((0, target, genotype.Levels.Count == 1 ? "conv3x3" : "identity"));
                Assert.Equal(hash, GenotypeHasher.Hash(deadCode.Parse()));
            }

            // Relabelled inner nodes in every level.
            var relabelled = GenotypeDraft.From(genotype);
            for (var k = 0; k < relabelled.Levels.Count; k++) relabelled.Relabel(k, random);
            Assert.Equal(hash, GenotypeHasher.Hash(relabelled.Parse()));

            // One live primitive changed to another: a different network, a different hash.
            var changed = GenotypeDraft.From(genotype);
            var (level0, motifIndex, edgeIndex) = FindLivePrimitive(genotype);
            if (level0 < 0)
            {
                // No primitive survives, only identities and merges: nothing at level 0 to change.
                identityOnly++;
                continue;
            }
            var edge = changed.Levels[level0].Motifs[motifIndex].Edges[edgeIndex];
            var replacement = Convolutions.First(op => op != edge.Op);
            changed.Levels[level0].Motifs[motifIndex].Edges[edgeIndex] = (edge.From, edge.To, replacement);
            Assert.NotEqual(hash, GenotypeHasher.Hash(changed.Parse()));
            checkedCount++;
        }
        Assert.True(checkedCount >= 200, $"only {checkedCount} genotypes had a live primitive to change ({identityOnly} had none)");
    }

    /// <summary>A level-0 edge that is part of the lowered network (identity included: replacing it adds an op).</summary>
    private static (int Level, int Motif, int Edge) FindLivePrimitive(Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        var used = new HashSet<string> { genotype.Cell.Name };
        for (var k = genotype.TopLevel; k >= 0; k--)
        {
            var next = new HashSet<string>();
            foreach (var name in used)
            {
                var info = liveness.Of(k, name);
                foreach (var edge in info.LiveEdges)
                {
                    if (k > 0 && !Primitives.IsStructural(edge.Op)) next.Add(edge.Op);
                    if (k == 0)
                    {
                        var motifs = genotype.Levels[0].Motifs;
                        var motifIndex = motifs.ToList().FindIndex(m => m.Name == name);
                        var edgeIndex = motifs[motifIndex].Edges.ToList().FindIndex(e => e.Index == edge.Index);
                        return (0, motifIndex, edgeIndex);
                    }
                }
            }
            used = next;
        }
        return (-1, -1, -1);
    }

    [Fact]
    public void AMotifThatIsOnlyAnIdentityHashesLikeIdentity()
    {
        const string withMotif = """
            {"format":"genotype/1","levels":[
              {"nodes":3,"motifs":{"pass":{"edges":[[0,1,"identity"],[1,2,"identity"]]},"c":{"edges":[[0,2,"conv1x1"]]}}},
              {"nodes":3,"motifs":{"cell":{"edges":[[0,1,"c"],[1,2,"pass"],[0,2,"c"]]}}}]}
            """;
        const string withIdentity = """
            {"format":"genotype/1","levels":[
              {"nodes":3,"motifs":{"c":{"edges":[[0,2,"conv1x1"]]}}},
              {"nodes":3,"motifs":{"cell":{"edges":[[0,1,"c"],[1,2,"identity"],[0,2,"c"]]}}}]}
            """;
        Assert.Equal(
            GenotypeHasher.Hash(GenotypeReader.Parse(withMotif, "a", "a")),
            GenotypeHasher.Hash(GenotypeReader.Parse(withIdentity, "b", "b")));
    }

    [Fact]
    public void HashIsA64DigitHexDigestAndDiffersBetweenFixtures()
    {
        var hashes = new[] { "tidepool-flat11.json", "tidepool-h3.json", "tidepool-deadcode.json" }
            .Select(f => GenotypeHasher.Hash(GenotypeReader.ReadFile(RepoPaths.Fixture(f)))).ToList();
        Assert.All(hashes, h => Assert.Matches("^[0-9a-f]{64}$", h));
        Assert.Equal(3, hashes.Distinct().Count());
    }
}
