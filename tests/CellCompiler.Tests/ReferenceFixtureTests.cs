using CellCompiler.Input;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>Every fixture on every preset and on the fixture skeleton, against the outside references.</summary>
public sealed class ReferenceFixtureTests
{
    private static readonly string[] Genotypes =
        ["tidepool-flat11.json", "tidepool-h3.json", "tidepool-deadcode.json", "tidepool-deadcell.json"];

    [Fact]
    public void FixturesMatchOnnxCheckerRuntimeAndPyTorch()
    {
        var skeletons = SkeletonPresets.All.Values
            .Append(SkeletonReader.Resolve(RepoPaths.Fixture("tidepool-skeleton.json")))
            .Select((s, i) => (s, i)).ToList();
        var cases = (from g in Genotypes
                     from s in skeletons
                     select new ReferenceCase($"{Path.GetFileNameWithoutExtension(g)}-{s.i}",
                         File.ReadAllText(RepoPaths.Fixture(g)), s.s)).ToList();
        // Both merge modes on the proxy preset too.
        cases.AddRange(Genotypes.Select(g => new ReferenceCase($"{Path.GetFileNameWithoutExtension(g)}-sum",
            File.ReadAllText(RepoPaths.Fixture(g)), SkeletonPresets.All["proxy"] with { Merge = MergeMode.Sum })));
        // And the other reduction.
        cases.AddRange(Genotypes.Select(g => new ReferenceCase($"{Path.GetFileNameWithoutExtension(g)}-conv3x3",
            File.ReadAllText(RepoPaths.Fixture(g)), SkeletonPresets.All["proxy"] with { Reduction = "conv3x3" })));
        ReferenceBatch.Check(cases);
    }

    [Fact]
    public void PopulationLinesMatchReferences()
    {
        var lines = File.ReadAllLines(RepoPaths.Fixture("tidepool-population.jsonl"))
            .Where(l => l.Trim().Length > 0 && !l.Contains("conv5x5")) // gen7-006 is deliberately invalid
            .Select((l, i) => new ReferenceCase($"population-{i}",
                System.Text.RegularExpressions.Regex.Replace(l, "\"id\":\\s*\"[^\"]*\",\\s*", ""), SkeletonPresets.All["proxy"]))
            .ToList();
        Assert.Equal(5, lines.Count);
        ReferenceBatch.Check(lines);
    }
}
