using CellCompiler.Input;
using CellCompiler.Spaces;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>Bad space/1 files (issue 13): every problem names the file and its JSON path; the CLI exits 2 and prints no stack trace.</summary>
public sealed class SpaceReaderTests
{
    public static TheoryData<string, string, string> BadSpaces => new()
    {
        { """{"format":"space/2","levels":[{"nodes":3,"ops":["none","conv3x3"]}]}""", "format", "unsupported format" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["none","conv3x3"]}],"budget":5}""", "budget", "unknown field" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["none","conv3x3"],"edges":[]}]}""", "levels[0].edges", "unknown field" },
        { """{"format":"space/1"}""", "", "missing required field 'levels'" },
        { """{"format":"space/1","levels":[]}""", "levels", "" },
        { """{"format":"space/1","levels":[{"nodes":1,"ops":["none","conv3x3"]}]}""", "levels[0].nodes", "" },
        { """{"format":"space/1","levels":[{"nodes":3.5,"ops":["none","conv3x3"]}]}""", "levels[0].nodes", "" },
        { """{"format":"space/1","levels":[{"nodes":3}]}""", "levels[0]", "ops" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":[]}]}""", "levels[0].ops", "" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["none","conv9x9"]}]}""", "levels[0].ops[1]", "unknown op 'conv9x9'" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["none","conv3x3","none"]}]}""", "levels[0].ops[2]", "listed twice" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["*","conv3x3"]}]}""", "levels[0].ops[0]", "level 0 has none" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["conv3x3"]},{"nodes":3,"ops":["*","conv3x3"]}]}""", "levels[1].ops[1]", "cannot be used at level 1" },
        { """{"format":"space/1","levels":[{"nodes":3,"ops":["conv3x3"]},{"nodes":3,"motifs":2,"ops":["*"]}]}""", "levels[1].motifs", "exactly one motif" },
        { """{"format":"space/1","levels":[{"nodes":3,"motifs":0,"ops":["conv3x3"]},{"nodes":3,"ops":["*"]}]}""", "levels[0].motifs", "" },
        { """{"format":"space/1","primitives":{"w":{"kind":"sepconv"}},"levels":[{"nodes":3,"ops":["w"]}]}""", "primitives.w", "kernel" },
        { """{"format":"space/1","primitives":{"m0_0":{"kind":"sepconv","kernel":5}},"levels":[{"nodes":3,"motifs":2,"ops":["m0_0"]},{"nodes":3,"ops":["*"]}]}""", "primitives.m0_0", "name of motif 0" },
        { """{"format":"space/1","levels":[{"nodes":64,"ops":["conv3x3"]},{"nodes":64,"ops":["*"]}]}""", "levels", "genotype limit" },
        { """{"format":"space/1","levels":"many"}""", "levels", "" },
        { """[1,2]""", "", "" },
    };

    [Theory]
    [MemberData(nameof(BadSpaces))]
    public void ABadSpaceNamesItsJsonPath(string json, string path, string problem)
    {
        var error = Assert.Throws<InputException>(() => SpaceReader.Parse(json, "pool.json", "pool"));
        Assert.Equal("pool.json", error.Origin);
        Assert.Contains(error.Problems, p => p.JsonPath == path && p.Problem.Contains(problem, StringComparison.Ordinal));
    }

    [Fact]
    public void EveryProblemOfAFileIsReportedTogether()
    {
        var error = Assert.Throws<InputException>(() => SpaceReader.Parse(
            """{"format":"space/1","extra":1,"levels":[{"nodes":3,"ops":["none","sepconv7x7"]},{"nodes":3,"ops":["*","ghost"]}]}""",
            "pool.json", "pool"));
        Assert.Equal(["extra", "levels[0].ops[1]", "levels[1].ops[1]"], error.Problems.Select(p => p.JsonPath).Order(StringComparer.Ordinal));
    }

    [Fact]
    public void TheCliExitsTwoNamingTheFileAndPathAndWritesNothingToStdout()
    {
        using var temp = new TempFolder();
        var path = temp.Write("tidepool.json", """{"format":"space/1","levels":[{"nodes":4,"ops":["none","conv3x3"],"colour":"blue"}]}""");
        var result = ProcessRunner.Cellc("space", path, "--json");
        Assert.Equal(2, result.ExitCode);
        Assert.Equal("", result.Stdout);
        Assert.Contains("tidepool.json: levels[0].colour: unknown field 'colour'", result.Stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", result.Stderr, StringComparison.Ordinal);

        var missing = ProcessRunner.Cellc("space", temp.File("absent.json"));
        Assert.Equal(2, missing.ExitCode);
        Assert.Contains("absent.json", missing.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void DeclaredPrimitivesJoinTheLevelZeroAlphabetAndTheGenotypes()
    {
        var space = SpaceFiles.Parse(SpaceFiles.Declared);
        Assert.Equal(["none", "identity", "s1", "s2", "mb"], space.Alphabet(0));
        var cursor = new SpaceCursor(space);
        cursor.Seek(124); // the last genotype: every pair labelled mb
        var json = GenotypeJson.Serialize(cursor.Current);
        var genotype = GenotypeReader.Parse(json, "g", "g");
        Assert.Equal(["s1", "s2", "mb"], genotype.Primitives.Declared.Select(d => d.Name));
        Assert.All(genotype.Cell.Edges, e => Assert.Equal("mb", e.Op));
        Assert.Equal(3, genotype.Cell.Edges.Count);
    }
}
