using CellCompiler.Input;
using CellCompiler.Tests.Support;
using CellCompiler.Vocabulary;

namespace CellCompiler.Tests;

/// <summary>Which generated genotypes one preset's export test checks.</summary>
public sealed record ExportTorchSelection(string Preset, int FirstSeed, int Count, int MaxConvs, int MaxLevels, int MaxNodes)
{
    public static readonly ExportTorchSelection Proxy = new("proxy", 100, 36, 160, 3, 5);
    public static readonly ExportTorchSelection Full = new("full", 200, 10, 120, 2, 4);
    public static readonly ExportTorchSelection Full224 = new("full224", 300, 3, 80, 2, 4);

    /// <summary>Live genotypes, alternating concat and sum merges, opset 13 for every third seed, small enough for CPU training steps.</summary>
    public IReadOnlyList<ExportCase> Cases()
    {
        var cases = new List<ExportCase>();
        for (var seed = FirstSeed; cases.Count < Count; seed++)
        {
            var genotype = GenotypeReader.Parse(ExportTorchGenotypes.Json(seed, MaxLevels, MaxNodes), $"export-{seed}", $"export-{seed}");
            if (ExportTorchGenotypes.UsedDefinitions(genotype) is null) continue; // dead cell: the command tests cover it
            var skeleton = SkeletonPresets.All[Preset] with { Merge = seed % 2 == 0 ? MergeMode.Concat : MergeMode.Sum };
            if (Lowering.Lowerer.Lower(genotype, skeleton).Ops.Count(op => op is Graph.ConvOp) > MaxConvs) continue;
            cases.Add(new ExportCase($"{Preset}-{seed}", genotype, skeleton, Opset: seed % 3 == 0 ? 13 : 17, Seed: seed));
        }
        return cases;
    }
}

/// <summary>
/// Generated genotypes with random declared primitives, on each preset, both merge modes and two
/// opsets, exported with `export-torch` and checked against PyTorch (Debian's python3-torch) and
/// ONNX Runtime: exactly our params and buffers, the same logits with the ONNX weights loaded, and
/// one training step that lowers the loss. One class per preset so they run in parallel.
/// </summary>
public abstract class ExportTorchReferenceTests(ExportTorchSelection selection)
{
    [Fact]
    public void Generated_genotypes_export_to_modules_that_match_the_compiled_model() =>
        ExportTorchBatch.Check(selection.Cases());
}

public sealed class ExportTorchProxyTests() : ExportTorchReferenceTests(ExportTorchSelection.Proxy);
public sealed class ExportTorchFullTests() : ExportTorchReferenceTests(ExportTorchSelection.Full);
public sealed class ExportTorchFull224Tests() : ExportTorchReferenceTests(ExportTorchSelection.Full224);

/// <summary>The generated cases reach every kind, every activation, both merges and both opsets, so the tests above cover them.</summary>
public sealed class ExportTorchCoverageTests
{
    [Fact]
    public void Generated_cases_use_every_kind_activation_parameter_merge_and_opset()
    {
        var cases = new[] { ExportTorchSelection.Proxy, ExportTorchSelection.Full, ExportTorchSelection.Full224 }.SelectMany(s => s.Cases()).ToList();
        var used = cases.SelectMany(c => ExportTorchGenotypes.UsedDefinitions(c.Genotype)!).ToList();
        Assert.Equal(PrimitiveKinds.All.Select(k => k.Name).Order(), used.Select(d => d.Kind.Name).Distinct().Order());
        var withAct = used.Where(d => d.Kind.Takes(PrimitiveParameter.Act)).Select(d => d.Act).Distinct();
        Assert.Equal(Activations.All.Order(), withAct.Order());
        Assert.Contains(used, d => d.Repeat == 2);
        Assert.Contains(used, d => d.Dilation > 1);
        Assert.Contains(used, d => d.Kind.Takes(PrimitiveParameter.Expand) && d.Expand == 1);
        Assert.Contains(used, d => d.Se > 0 && d.Se != 0.25m);
        Assert.Contains(used, d => d.Kernel == PrimitiveKind.MaxKernel);
        Assert.Equal([MergeMode.Concat, MergeMode.Sum], cases.Select(c => c.Skeleton.Merge).Distinct().Order());
        Assert.Equal([13, 17], cases.Select(c => c.Opset).Distinct().Order());
        // hardswish at opset 13 is HardSigmoid then Mul in the ONNX model: PyTorch's one module must match it too.
        Assert.Contains(cases, c => c.Opset == 13 && ExportTorchGenotypes.UsedDefinitions(c.Genotype)!.Any(d => d.Act == Activation.HardSwish));
    }
}
