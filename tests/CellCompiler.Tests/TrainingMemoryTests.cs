using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The training memory estimate of issue 3 against the documented formula (TrainingMemory.cs and
/// the README), computed by hand on a tiny network. The formula is common practice for a rough
/// figure and only an estimate: real frameworks keep fewer or more tensors for the backward pass
/// and add workspace, so this test checks the arithmetic of the documented formula, not a
/// measurement of any framework's memory.
///
/// Formula: batch * (float32 bytes of every activation tensor at N = 1, the input included)
///          + 4 copies of every parameter (weight, gradient, two optimizer moments) * 4 bytes
///          + BatchNorm running statistics (buffers) * 4 bytes.
/// </summary>
public sealed class TrainingMemoryTests
{
    // A flat cell with one edge: node 0 -> conv1x1 -> node 1 (the output).
    private const string Genotype = """
        {"format": "genotype/1", "name": "tiny", "levels": [{"nodes": 2, "motifs": {"cell": {"edges": [[0, 1, "conv1x1"]]}}}]}
        """;

    // Input 3x8x8, one stage of one cell with 4 channels, 5 classes; stem conv3x3 stride 1, no pool (the defaults).
    private const string SkeletonJson = """
        {"format": "skeleton/1", "input": {"channels": 3, "height": 8, "width": 8}, "classes": 5,
         "stages": [{"cells": 1, "channels": 4}]}
        """;

    private const int Batch = 3;
    private const long Float32 = 4;

    /// <summary>Every tensor of the network (contract section 2 and 3 lowering), elements per sample.</summary>
    private static readonly (string Tensor, long Elements)[] Activations =
    [
        ("input images 3x8x8", 3 * 8 * 8),
        ("stem Conv 3x3 3->4, 4x8x8 (stride 1, pads 1 keep 8x8)", 4 * 8 * 8),
        ("stem BatchNormalization 4x8x8", 4 * 8 * 8),
        ("stem Relu 4x8x8", 4 * 8 * 8),
        ("cell conv1x1 Conv 4->4, 4x8x8", 4 * 8 * 8),
        ("cell conv1x1 BatchNormalization 4x8x8", 4 * 8 * 8),
        ("cell conv1x1 Relu 4x8x8", 4 * 8 * 8),
        ("head GlobalAveragePool 4x1x1", 4),
        ("head Flatten 4", 4),
        ("head Gemm 5 (logits)", 5),
    ];

    // Contract section 4, counted by hand:
    // params: stem Conv 4*3*3*3 = 108, stem BN scale+bias 2*4 = 8, cell Conv 4*4*1*1 = 16, cell BN 8, Gemm 4*5 + 5 = 25.
    private const long Params = 108 + 8 + 16 + 8 + 25;
    // buffers: BN running mean and variance, 2*4 per BN, two BNs.
    private const long Buffers = 2 * (2 * 4);

    private static long HandEstimate(int batch)
    {
        var activationBytesPerSample = Activations.Sum(a => a.Elements) * Float32;
        return batch * activationBytesPerSample + 4 * Params * Float32 + Buffers * Float32;
    }

    [Fact]
    public void The_hand_computation_itself()
    {
        // 192 + 6 * 256 + 4 + 4 + 5 = 1,741 elements = 6,964 bytes per sample;
        // 3 * 6,964 + 4 * 165 * 4 + 16 * 4 = 20,892 + 2,640 + 64 = 23,596 bytes.
        Assert.Equal(165, Params);
        Assert.Equal(16, Buffers);
        Assert.Equal(1741, Activations.Sum(a => a.Elements));
        Assert.Equal(23_596, HandEstimate(Batch));
    }

    [Fact]
    public void Library_estimate_equals_the_formula_by_hand()
    {
        var genotype = GenotypeReader.Parse(Genotype, "tiny", "tiny");
        var skeleton = SkeletonReader.Parse(System.Text.Encoding.UTF8.GetBytes(SkeletonJson), "tiny-skeleton");
        var model = Compiler.Compile(genotype, skeleton);

        // The network is exactly the ops listed above (contract sections 2 and 3), in that order.
        Assert.Equal(["Conv", "BatchNormalization", "Relu", "Conv", "BatchNormalization", "Relu", "GlobalAveragePool", "Flatten", "Gemm"],
            model.Network.Network.Ops.Select(o => o.OnnxType).ToList());
        Assert.Equal(Params, model.Figures.Params);
        Assert.Equal(Buffers, model.Figures.Buffers);
        Assert.Equal(Activations.Sum(a => a.Elements) * Float32, TrainingMemory.ActivationBytesPerSample(model.Network));

        Assert.Equal(HandEstimate(Batch), TrainingMemory.EstimateBytes(model.Network, model.Figures, Batch));
        Assert.Equal(HandEstimate(1), TrainingMemory.EstimateBytes(model.Network, model.Figures, 1));
        Assert.Equal(HandEstimate(64), TrainingMemory.EstimateBytes(model.Network, model.Figures, 64));
    }

    [Fact]
    public void Check_reports_the_formula_by_hand_as_train_memory_bytes()
    {
        using var folder = new TempFolder();
        var genotypePath = folder.Write("tiny.json", Genotype);
        var skeletonPath = folder.Write("tiny-skeleton.json", SkeletonJson);
        var result = ProcessRunner.Cellc(["check", genotypePath, "--skeleton", skeletonPath, "--json", "--train-batch", Batch.ToString()], null, folder.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        var record = JsonDocument.Parse(result.Stdout).RootElement;
        Assert.Equal("ok", record.GetProperty("status").GetString());
        Assert.Equal(Params, record.GetProperty("params").GetInt64());
        Assert.Equal(Buffers, record.GetProperty("buffers").GetInt64());
        Assert.Equal(HandEstimate(Batch), record.GetProperty("train_memory_bytes").GetInt64());
    }

    [Fact]
    public void Check_uses_a_training_batch_of_64_by_default()
    {
        using var folder = new TempFolder();
        var genotypePath = folder.Write("tiny.json", Genotype);
        var skeletonPath = folder.Write("tiny-skeleton.json", SkeletonJson);
        var result = ProcessRunner.Cellc(["check", genotypePath, "--skeleton", skeletonPath, "--json"], null, folder.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        // Issue 3: `--train-batch B` (default 64).
        Assert.Equal(HandEstimate(64), JsonDocument.Parse(result.Stdout).RootElement.GetProperty("train_memory_bytes").GetInt64());
    }
}
