using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Graph;
using CellCompiler.Lowering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Generated genotypes (random depth, width and sparsity, both merge modes) on each preset,
/// against the ONNX checker, ONNX Runtime and PyTorch. One class per preset so they run in parallel.
/// </summary>
public abstract class ReferenceGeneratedTests(string preset, int firstSeed, int count, int maxConvs, int maxLevels, int maxNodes)
{
    [Fact]
    public void GeneratedGenotypesMatchOnnxCheckerRuntimeAndPyTorch()
    {
        var cases = new List<ReferenceCase>();
        var live = 0;
        for (var seed = firstSeed; live < count; seed++)
        {
            var json = RandomGenotypes.Json(seed, maxLevels, maxNodes);
            var genotype = GenotypeReader.Parse(json, "generated", "generated");
            var skeleton = SkeletonPresets.All[preset] with { Merge = seed % 2 == 0 ? MergeMode.Concat : MergeMode.Sum };
            // Keep the networks small enough for two CPU forward passes per case in CI.
            var cellSize = CellConvCount(genotype);
            if (cellSize > maxConvs) continue;
            if (cellSize >= 0) live++;
            cases.Add(new ReferenceCase($"{preset}-{seed}", json, skeleton));
        }
        Assert.True(cases.Count >= count);
        ReferenceBatch.Check(cases);
    }

    /// <summary>Convs in one cell at proxy size, or -1 for a dead cell (kept: both sides must agree it is dead).</summary>
    private static int CellConvCount(Genotype genotype)
    {
        try
        {
            var tiny = new Skeleton(new InputSpec(1, 4, 4), 2, new StemSpec("conv3x3", 1, false), [new StageSpec(1, 2)], "sepconv3x3", MergeMode.Concat);
            return Lowerer.Lower(genotype, tiny).Ops.Count(op => op is ConvOp) - 1;
        }
        catch (DeadCellException) { return -1; }
    }
}

public sealed class ReferenceGeneratedProxyTests() : ReferenceGeneratedTests("proxy", 1000, 100, 80, 3, 6);
public sealed class ReferenceGeneratedFullTests() : ReferenceGeneratedTests("full", 2000, 60, 25, 3, 5);
public sealed class ReferenceGeneratedFull224Tests() : ReferenceGeneratedTests("full224", 3000, 45, 16, 3, 4);
