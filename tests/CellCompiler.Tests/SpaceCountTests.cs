using System.Numerics;
using CellCompiler.Input;
using CellCompiler.Spaces;

namespace CellCompiler.Tests;

/// <summary>
/// Exact genotype counts of space/1 files (issue 13). The check values are common practice in the
/// field as practitioners state them, not a published source: a 4-node motif over 6 ops has
/// 6^(4*3/2) = 46,656 labellings; a flat 11-node DAG over 6 ops 6^55; six 4-node motifs over 6 ops
/// under a 5-node cell over those six motifs only 6^10 * (6^6)^6 = 6^46. The 4-node space over five
/// ops with none and identity, 5^6 = 15,625, is the size NAS-Bench-201 (Dong and Yang, ICLR 2020) publishes.
/// </summary>
public sealed class SpaceCountTests
{
    private const string SixOps = "\"conv1x1\",\"conv3x3\",\"dwconv3x3\",\"sepconv3x3\",\"maxpool3x3\",\"avgpool3x3\"";

    [Fact]
    public void AFourNodeMotifOverSixOpsHas46656Labellings()
    {
        var space = SpaceFiles.Parse($$"""{"format":"space/1","levels":[{"nodes":4,"ops":[{{SixOps}}]}]}""");
        Assert.Equal(new BigInteger(46_656), space.Genotypes);
        Assert.Equal(new BigInteger(46_656), space.LabellingsPerMotif(0));
    }

    [Fact]
    public void AFlatElevenNodeCellOverSixOpsHasSixToThe55()
    {
        var space = SpaceFiles.Parse($$"""{"format":"space/1","levels":[{"nodes":11,"ops":[{{SixOps}}]}]}""");
        Assert.Equal(BigInteger.Pow(6, 55), space.Genotypes);
        // 6^55 written out (digits from Python's int arithmetic, 6**55, outside this code).
        Assert.Equal("6285195213566005335561053533150026217291776", space.Genotypes.ToString(System.Globalization.CultureInfo.InvariantCulture));
        Assert.Equal(55 * Math.Log10(6), space.Log10Genotypes, 9);
    }

    [Fact]
    public void SixMotifsUnderAFiveNodeCellOverThoseMotifsOnlyHaveSixToThe46()
    {
        var space = SpaceFiles.Parse($$"""
            {"format":"space/1","levels":[{"nodes":4,"motifs":6,"ops":[{{SixOps}}]},{"nodes":5,"ops":["*"]}]}
            """);
        Assert.Equal(BigInteger.Pow(6, 46), space.Genotypes);
        Assert.Equal(BigInteger.Pow(6, 10) * BigInteger.Pow(BigInteger.Pow(6, 6), 6), space.Genotypes);
        Assert.Equal(["m0_0", "m0_1", "m0_2", "m0_3", "m0_4", "m0_5"], space.Alphabet(1));
    }

    [Fact]
    public void TheFourNodeFiveOpSpaceHas15625Genotypes()
    {
        Assert.Equal(new BigInteger(15_625), SpaceFiles.Parse(SpaceFiles.Flat4Five).Genotypes);
    }

    [Fact]
    public void TheIssueExampleCountsEveryLevel()
    {
        // Level 0: six 4-node motifs over 6 ops, (6^6)^6; the cell: 5 nodes over the six motifs,
        // identity and none, 8^10.
        var space = SpaceFiles.Parse("""
            { "format": "space/1",
              "primitives": { "wide5": { "kind": "sepconv", "kernel": 5 } },
              "levels": [
                { "nodes": 4, "motifs": 6, "ops": ["conv1x1", "dwconv3x3", "wide5", "maxpool3x3", "identity", "none"] },
                { "nodes": 5, "motifs": 1, "ops": ["*", "identity", "none"] } ] }
            """);
        Assert.Equal(BigInteger.Pow(6, 36) * BigInteger.Pow(8, 10), space.Genotypes);
        Assert.Equal("11075029296642060084083504797024518144", space.Genotypes.ToString(System.Globalization.CultureInfo.InvariantCulture));
        Assert.Equal(["m0_0", "m0_1", "m0_2", "m0_3", "m0_4", "m0_5", "identity", "none"], space.Alphabet(1));
    }

    [Fact]
    public void CountsBeyondTenToTheFortyStayExact()
    {
        // Three levels of eight 6-node motifs over 8 ops: far beyond a double's 53-bit mantissa.
        var space = SpaceFiles.Parse("""
            {"format":"space/1","levels":[
              {"nodes":6,"motifs":8,"ops":["none","identity","conv1x1","conv3x3","dwconv3x3","sepconv3x3","maxpool3x3","avgpool3x3"]},
              {"nodes":4,"motifs":8,"ops":["*"]},
              {"nodes":4,"ops":["*"]}]}
            """);
        var expected = BigInteger.Pow(BigInteger.Pow(8, 15), 8) * BigInteger.Pow(BigInteger.Pow(8, 6), 8) * BigInteger.Pow(8, 6);
        Assert.Equal(expected, space.Genotypes);
        Assert.Equal(BigInteger.Pow(2, 3 * (120 + 48 + 6)), space.Genotypes);
    }

    [Fact]
    public void TheCursorNamesEveryGenotypeOnceAndSeekAgreesWithAdvance()
    {
        // Mixed-radix decoding: index i and the i-th odometer step are the same genotype, and the
        // 729 genotypes are 729 different documents.
        var space = SpaceFiles.Parse(SpaceFiles.TwoLevels);
        var walker = new SpaceCursor(space);
        var seeker = new SpaceCursor(space);
        var seen = new HashSet<string>();
        for (var i = 0; i < 729; i++)
        {
            if (i > 0) Assert.True(walker.Advance());
            seeker.Seek(i);
            var json = GenotypeJson.Serialize(walker.Current);
            Assert.Equal(json, GenotypeJson.Serialize(seeker.Current));
            Assert.True(seen.Add(json), $"index {i} repeats a genotype");
            // Every genotype of the space is a valid genotype/1 document.
            GenotypeReader.Parse(json, $"g{i}", $"g{i}");
        }
        Assert.False(walker.Advance());
        Assert.Throws<ArgumentOutOfRangeException>(() => seeker.Seek(729));
    }
}

/// <summary>The README's space/1 example parses and has the count the README states.</summary>
public sealed class SpaceReadmeTests
{
    [Fact]
    public void TheReadmeExampleIsAValidSpaceOfTheStatedSize()
    {
        var readme = File.ReadAllText(Path.Combine(Support.RepoPaths.Root, "README.md"));
        var section = readme[readme.IndexOf("### Search space (`space/1`, JSON)", StringComparison.Ordinal)..];
        var start = section.IndexOf("```json\n", StringComparison.Ordinal) + "```json\n".Length;
        var json = section[start..section.IndexOf("```", start, StringComparison.Ordinal)];
        var space = SpaceFiles.Parse(json);
        Assert.Equal("tidepool-two-level", space.Name);
        Assert.Equal(BigInteger.Pow(BigInteger.Pow(6, 6), 6) * BigInteger.Pow(8, 10), space.Genotypes);
        Assert.Contains("(6^6)^6 * 8^10, about 1.1e37", section, StringComparison.Ordinal);
        Assert.InRange((double)space.Genotypes, 1.1e37, 1.15e37);
    }
}
