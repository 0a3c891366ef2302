using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Tests.Support;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>
/// Declared primitives (contract 3.1) against the outside references: genotypes with random
/// declarations of every kind, parameters drawn in range or left to their defaults, on every preset,
/// both merge modes, opsets 13 (hard-swish as HardSigmoid + Mul) and 17. The PyTorch rebuild
/// (tests/reference/torch_reference.py) builds each kind with torch.nn layers on its own and must
/// agree exactly on params, buffers, MACs, output shape and op counts, predict every node name, take
/// every initializer by name, and reproduce ONNX Runtime's logits; every model passes the ONNX
/// checker with full shape inference, carries every attribute value, runs in ONNX Runtime, and where
/// OpenCV 4.6 reads its ops (see OpencvCoverage) gives OpenCV's logits too.
/// 250 + 40 + 12 = 302 live generated networks (most on the proxy preset, where they are cheap).
/// </summary>
public abstract class ReferenceDeclaredTests(ITestOutputHelper output, string preset, int firstSeed, int count, int maxConvs)
{
    [Fact]
    public void GenotypesWithRandomDeclarationsMatchEveryReference()
    {
        var cases = ReferenceCases.Generated(preset, firstSeed, count, maxConvs,
            seed => RandomGenotypes.JsonWithDeclarations(seed, maxLevels: 2, maxNodes: 5));
        var coverage = ReferenceBatch.Check(cases);
        output.WriteLine(coverage.Summary);
        Assert.True(coverage.Models >= count, $"{coverage.Models} live models");
        Assert.True(coverage.OpencvModels >= coverage.Models / 4, $"only {coverage.OpencvModels} of {coverage.Models} ran in OpenCV");
    }
}

public sealed class ReferenceDeclaredProxyTests(ITestOutputHelper output) : ReferenceDeclaredTests(output, "proxy", 7000, 250, 40);
public sealed class ReferenceDeclaredFullTests(ITestOutputHelper output) : ReferenceDeclaredTests(output, "full", 8000, 40, 14);
public sealed class ReferenceDeclaredFull224Tests(ITestOutputHelper output) : ReferenceDeclaredTests(output, "full224", 9000, 12, 8);

/// <summary>
/// Every kind, every value of every integer parameter, every activation on every kind that has one,
/// and squeeze ratios from 0 to 1 (RandomGenotypes.EveryKindAndParameter), each declared and used in
/// flat cells on the proxy preset: a chain of six declared ops with an identity skip from the input
/// to the output, so each cell also merges. Each cell runs under concat at opset 13 and under sum at
/// opset 17, against every reference of <see cref="ReferenceBatch"/>.
/// </summary>
public sealed class ReferenceDeclaredVocabularyTests(ITestOutputHelper output)
{
    public static List<ReferenceCase> Cases()
    {
        var all = RandomGenotypes.EveryKindAndParameter();
        var cases = new List<ReferenceCase>();
        foreach (var (chunk, index) in all.Chunk(6).Select((c, i) => (c, i)))
        {
            var edges = chunk.Select((d, i) => new object[] { i, i + 1, d.Name }).ToList();
            if (chunk.Length > 1) edges.Add([0, chunk.Length, "identity"]); // a pair appears at most once
            var json = JsonSerializer.Serialize(new
            {
                format = "genotype/1",
                name = $"vocabulary-{index}",
                primitives = chunk.ToDictionary(d => d.Name, d => d.Declaration),
                levels = new[] { new { nodes = chunk.Length + 1, motifs = new { cell = new { edges } } } },
            });
            cases.Add(new ReferenceCase($"vocabulary-{index}-concat13", json, SkeletonPresets.All["proxy"], 13));
            cases.Add(new ReferenceCase($"vocabulary-{index}-sum17", json, SkeletonPresets.All["proxy"] with { Merge = MergeMode.Sum }, 17));
        }
        return cases;
    }

    [Fact]
    public void EveryKindAndParameterMatchesEveryReference()
    {
        var cases = Cases();
        Assert.True(cases.Count >= 20, $"{cases.Count} cases");
        var coverage = ReferenceBatch.Check(cases);
        output.WriteLine(coverage.Summary);
        Assert.Equal(cases.Count, coverage.Models);
    }
}
