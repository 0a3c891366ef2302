using CellCompiler.Compilation;
using CellCompiler.Input;

namespace CellCompiler.Tests;

/// <summary>
/// Params, buffers, MACs and peak memory on tiny networks, derived by hand here from published formulas:
/// conv output side floor((in + 2*pad - k) / stride) + 1 (ONNX operator specification, Conv);
/// conv weights Cout * Cin/group * kH * kW and MACs Cout * Hout * Wout * Cin/group * kH * kW
/// (common practice, as fixed by contract section 4); Gemm in*out weights + out biases, in*out MACs;
/// BatchNorm 2*C trainable (scale, bias) and 2*C running statistics.
/// </summary>
public sealed class FigureFormulaTests
{
    // Tiny skeleton: input 3x8x8, stem to C=4, one stage of one cell, 5 classes.
    private static readonly Skeleton Tiny = new(new InputSpec(3, 8, 8), 5, new StemSpec("conv3x3", 1, false),
        [new StageSpec(1, 4)], "sepconv3x3", MergeMode.Concat);

    private static long ConvWeights(long cout, long cinPerGroup, long k) => cout * cinPerGroup * k * k;
    private static long ConvMacs(long cout, long hout, long wout, long cinPerGroup, long k) => cout * hout * wout * cinPerGroup * k * k;
    private static int OutSide(int size, int k, int stride, int pad) => (size + 2 * pad - k) / stride + 1;

    // Stem: Conv 3x3 3->4 on 8x8 (pads 1, stride 1 -> 8x8) + BN(4); head: Gemm 4->5 with bias.
    private static readonly long StemParams = ConvWeights(4, 3, 3) + 2 * 4;   // 108 + 8
    private static readonly long StemMacs = ConvMacs(4, 8, 8, 3, 3);          // 6,912
    private const long HeadParams = 4 * 5 + 5;
    private const long HeadMacs = 4 * 5;
    private const long StemBuffers = 2 * 4;

    private static CompiledModel CompileFlat(string edgesJson, int nodes, Skeleton skeleton) =>
        Compiler.Compile(GenotypeReader.Parse(
            "{\"format\":\"genotype/1\",\"levels\":[{\"nodes\":" + nodes + ",\"motifs\":{\"cell\":{\"edges\":" + edgesJson + "}}}]}",
            "test", "test"), skeleton);

    [Theory]
    // conv1x1: Conv 1x1 4->4 + BN
    [InlineData("conv1x1", 4 * 4 * 1 * 1 + 8, 8, 4 * 8 * 8 * 4 * 1)]
    // conv3x3: Conv 3x3 pads 1 4->4 + BN
    [InlineData("conv3x3", 4 * 4 * 3 * 3 + 8, 8, 4 * 8 * 8 * 4 * 9)]
    // dwconv3x3: Conv 3x3 group 4 (1 input channel per group) + BN
    [InlineData("dwconv3x3", 4 * 1 * 3 * 3 + 8, 8, 4 * 8 * 8 * 1 * 9)]
    // sepconv3x3: depthwise 3x3 + pointwise 1x1 4->4 + one BN
    [InlineData("sepconv3x3", 4 * 9 + 4 * 4 + 8, 8, 4 * 8 * 8 * 9 + 4 * 8 * 8 * 4)]
    [InlineData("maxpool3x3", 0, 0, 0)]
    [InlineData("avgpool3x3", 0, 0, 0)]
    [InlineData("identity", 0, 0, 0)]
    public void EachPrimitiveCostsWhatTheFormulaSays(string op, long cellParams, long cellBuffers, long cellMacs)
    {
        var model = CompileFlat($"""[[0, 1, "{op}"]]""", 2, Tiny);
        Assert.Equal(StemParams + cellParams + HeadParams, model.Figures.Params);
        Assert.Equal(StemBuffers + cellBuffers, model.Figures.Buffers);
        Assert.Equal(StemMacs + cellMacs + HeadMacs, model.Figures.Macs);
        Assert.Equal([5], model.OutputShape.Dims);
    }

    [Fact]
    public void ConcatMergeAddsAProjectionFromTheSummedChannels()
    {
        // Node 2 has two live inputs (identity of x, maxpool of conv1x1(x)): Concat gives 8 channels,
        // then Conv 1x1 8->4 + BN.
        var model = CompileFlat("""[[0, 1, "conv1x1"], [0, 2, "identity"], [1, 2, "maxpool3x3"]]""", 3, Tiny);
        var conv1x1 = ConvWeights(4, 4, 1) + 8;
        var projection = ConvWeights(4, 8, 1) + 8;
        Assert.Equal(StemParams + conv1x1 + projection + HeadParams, model.Figures.Params);
        Assert.Equal(StemBuffers + 8 + 8, model.Figures.Buffers);
        Assert.Equal(StemMacs + ConvMacs(4, 8, 8, 4, 1) + ConvMacs(4, 8, 8, 8, 1) + HeadMacs, model.Figures.Macs);
        Assert.Equal(1, model.Figures.OpCounts["Concat"]);
    }

    [Fact]
    public void SumMergeIsFree()
    {
        var model = CompileFlat("""[[0, 1, "conv1x1"], [0, 2, "identity"], [1, 2, "maxpool3x3"]]""", 3, Tiny with { Merge = MergeMode.Sum });
        Assert.Equal(StemParams + ConvWeights(4, 4, 1) + 8 + HeadParams, model.Figures.Params);
        Assert.Equal(StemMacs + ConvMacs(4, 8, 8, 4, 1) + HeadMacs, model.Figures.Macs);
        Assert.Equal(1, model.Figures.OpCounts["Sum"]);
        Assert.False(model.Figures.OpCounts.ContainsKey("Concat"));
    }

    [Theory]
    [InlineData("sepconv3x3")]
    [InlineData("conv3x3")]
    public void ReductionHalvesTheSideAndCostsWhatTheFormulaSays(string reduction)
    {
        // Two stages (4 then 6 channels) of identity cells: only the stem, one reduction and the head cost.
        var skeleton = Tiny with { Stages = [new StageSpec(1, 4), new StageSpec(1, 6)], Reduction = reduction };
        var model = CompileFlat("""[[0, 1, "identity"]]""", 2, skeleton);
        var side = OutSide(8, 3, 2, 1); // 4
        Assert.Equal(4, side);
        long reductionParams, reductionMacs;
        if (reduction == "sepconv3x3")
        {
            reductionParams = ConvWeights(4, 1, 3) + ConvWeights(6, 4, 1) + 2 * 6;
            reductionMacs = ConvMacs(4, side, side, 1, 3) + ConvMacs(6, side, side, 4, 1);
        }
        else
        {
            reductionParams = ConvWeights(6, 4, 3) + 2 * 6;
            reductionMacs = ConvMacs(6, side, side, 4, 3);
        }
        long head = 6 * 5 + 5;
        Assert.Equal(StemParams + reductionParams + head, model.Figures.Params);
        Assert.Equal(StemBuffers + 2 * 6, model.Figures.Buffers);
        Assert.Equal(StemMacs + reductionMacs + 6 * 5, model.Figures.Macs);
    }

    [Fact]
    public void StemWithStrideAndPoolShrinksTheInputTwice()
    {
        var skeleton = Tiny with { Input = new InputSpec(3, 16, 16), Stem = new StemSpec("conv3x3", 2, true) };
        var model = CompileFlat("""[[0, 1, "conv1x1"]]""", 2, skeleton);
        var afterStem = OutSide(16, 3, 2, 1);       // 8
        var afterPool = OutSide(afterStem, 3, 2, 1); // 4
        Assert.Equal((8, 4), (afterStem, afterPool));
        Assert.Equal(StemParams + ConvWeights(4, 4, 1) + 8 + HeadParams, model.Figures.Params);
        Assert.Equal(ConvMacs(4, afterStem, afterStem, 3, 3) + ConvMacs(4, afterPool, afterPool, 4, 1) + HeadMacs, model.Figures.Macs);
    }

    [Fact]
    public void HeadIsAGemmFromTheLastChannelsToTheClasses()
    {
        var model = CompileFlat("""[[0, 1, "identity"]]""", 2, Tiny with { Classes = 1000 });
        Assert.Equal(StemParams + 4 * 1000 + 1000, model.Figures.Params);
        Assert.Equal(StemMacs + 4 * 1000, model.Figures.Macs);
        Assert.Equal([1000], model.OutputShape.Dims);
    }

    [Fact]
    public void PeakActivationFollowsTensorLifetimesInEmittedOrder()
    {
        // Ops: conv, bn, relu (stem), gap, flatten, gemm; identity cell emits nothing.
        // float32 bytes: input 3*8*8*4 = 768; each stem tensor 4*8*8*4 = 1024; gap/flatten 16; logits 20.
        // Step 0 conv: input (last read here) + conv out = 1792. Step 1 bn: conv out + bn out = 2048.
        // Step 2 relu: 2048. Step 3 gap: 1024 + 16. So the peak is 2048.
        var model = CompileFlat("""[[0, 1, "identity"]]""", 2, Tiny);
        Assert.Equal(2048, model.Figures.PeakActivationBytes);
    }

    [Fact]
    public void PeakActivationCountsABranchKeptAliveForAMerge()
    {
        // Cell: node1 = conv1x1(x); node2 = concat(x, node1) -> conv1x1 -> bn -> relu.
        // x (stem relu out, 1024 B) stays alive until the Concat reads it, beside conv1x1's chain.
        // At the Concat: x 1024 + node1 1024 + concat out 2048 = 4096 B.
        var model = CompileFlat("""[[0, 1, "conv1x1"], [0, 2, "identity"], [1, 2, "identity"]]""", 3, Tiny);
        Assert.Equal(4096, model.Figures.PeakActivationBytes);
    }
}
