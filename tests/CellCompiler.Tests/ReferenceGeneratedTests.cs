using CellCompiler.Input;
using CellCompiler.Graph;
using CellCompiler.Lowering;
using CellCompiler.Tests.Support;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>
/// Generated genotypes (random depth, width and sparsity; both merge modes; opsets 13 and 17) on each
/// preset, against the ONNX checker, the ONNX library's attribute reading, ONNX Runtime, the PyTorch
/// rebuild (figures, op counts, node names, weights and logits) and OpenCV's DNN module (logits).
/// One class per preset so they run in parallel.
/// </summary>
public abstract class ReferenceGeneratedTests(ITestOutputHelper output, string preset, int firstSeed, int count, int maxConvs, int maxLevels, int maxNodes)
{
    [Fact]
    public void GeneratedGenotypesMatchOnnxCheckerRuntimePyTorchAndOpencv()
    {
        var cases = ReferenceCases.Generated(preset, firstSeed, count, maxConvs,
            seed => RandomGenotypes.Json(seed, maxLevels, maxNodes));
        var coverage = ReferenceBatch.Check(cases);
        output.WriteLine(coverage.Summary);
        Assert.True(coverage.Models >= count, $"{coverage.Models} live models");
        // Built-in primitives only: OpenCV reads every one of them.
        Assert.Equal(coverage.Models, coverage.OpencvModels);
        // The engines really were compared (float32 kernels never agree to the last bit over so many networks).
        Assert.InRange(coverage.WorstTorchError, double.Epsilon, ReferenceBatch.LogitTolerance);
        Assert.InRange(coverage.WorstOpencvError, double.Epsilon, ReferenceBatch.LogitTolerance);
    }
}

// OpenCV runs on all of them: 100 + 40 + 12 generated networks over the three presets.
public sealed class ReferenceGeneratedProxyTests(ITestOutputHelper output) : ReferenceGeneratedTests(output, "proxy", 1000, 100, 80, 3, 6);
public sealed class ReferenceGeneratedFullTests(ITestOutputHelper output) : ReferenceGeneratedTests(output, "full", 2000, 40, 25, 3, 5);
public sealed class ReferenceGeneratedFull224Tests(ITestOutputHelper output) : ReferenceGeneratedTests(output, "full224", 3000, 12, 16, 3, 4);

/// <summary>Builds batches of generated reference cases.</summary>
public static class ReferenceCases
{
    /// <summary>
    /// Cases from consecutive seeds until <paramref name="count"/> have a live cell of at most
    /// <paramref name="maxConvs"/> convolutions (dead cells are kept too: both sides must agree they are
    /// dead). The seed picks the merge mode (even: concat) and the opset (13 or 17, alternating in pairs),
    /// so every combination appears.
    /// </summary>
    public static List<ReferenceCase> Generated(string preset, int firstSeed, int count, int maxConvs, Func<int, string> genotypeJson)
    {
        var cases = new List<ReferenceCase>();
        var live = 0;
        for (var seed = firstSeed; live < count; seed++)
        {
            var json = genotypeJson(seed);
            var genotype = GenotypeReader.Parse(json, $"seed {seed}", $"seed {seed}");
            var skeleton = SkeletonPresets.All[preset] with { Merge = seed % 2 == 0 ? MergeMode.Concat : MergeMode.Sum };
            var opset = seed / 2 % 2 == 0 ? 17 : 13;
            // Keep the networks small enough for three CPU forward passes per case in CI.
            var cellSize = CellConvCount(genotype);
            if (cellSize > maxConvs) continue;
            if (cellSize >= 0) live++;
            cases.Add(new ReferenceCase($"{preset}-{seed}", json, skeleton, opset));
        }
        Assert.Contains(cases, c => c.Skeleton.Merge == MergeMode.Sum && c.Opset == 13);
        Assert.Contains(cases, c => c.Skeleton.Merge == MergeMode.Concat && c.Opset == 17);
        return cases;
    }

    /// <summary>Convs in one cell at a tiny size, or -1 for a dead cell.</summary>
    private static int CellConvCount(Genotype genotype)
    {
        try
        {
            var tiny = new Skeleton(new InputSpec(1, 4, 4), 2, new StemSpec("conv3x3", 1, false), [new StageSpec(1, 2)], "sepconv3x3", MergeMode.Concat);
            return Lowerer.Lower(genotype, tiny).Ops.Count(op => op.OnnxType == "Conv") - 1;
        }
        catch (DeadCellException) { return -1; }
    }
}
