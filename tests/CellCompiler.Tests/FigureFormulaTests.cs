using CellCompiler.Compilation;
using CellCompiler.Input;

namespace CellCompiler.Tests;

/// <summary>
/// Params, buffers, MACs and peak memory on tiny networks, derived by hand here from published formulas:
/// conv output side floor((in + 2*pad - k) / stride) + 1 (ONNX operator specification, Conv);
/// conv weights Cout * Cin/group * kH * kW and MACs Cout * Hout * Wout * Cin/group * kH * kW
/// (common practice, as fixed by contract section 4); Gemm in*out weights + out biases, in*out MACs;
/// BatchNorm 2*C trainable (scale, bias) and 2*C running statistics.
/// Declared primitives (contract 3.1) from the ONNX Conv definition (onnx.ai, Operators, Conv): the
/// weight is [M, C/group, kH, kW] and each output element is a sum over C/group * kH * kW products,
/// so MACs = M * Hout * Wout * C/group * kH * kW whatever the dilation (dilation spaces the taps out,
/// it adds none); the output side with dilation d is floor((in + 2p - d*(k-1) - 1) / stride) + 1; the
/// optional bias B has M elements, a param (contract section 4) that adds no multiplication.
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

    /// <summary>A one-edge cell applying the declared primitive "op".</summary>
    private static CompiledModel CompileDeclared(string declaration, Skeleton skeleton, int opset = 17) =>
        Compiler.Compile(GenotypeReader.Parse(
            "{\"format\":\"genotype/1\",\"primitives\":{\"op\":" + declaration + "},\"levels\":[{\"nodes\":2,\"motifs\":{\"cell\":{\"edges\":[[0,1,\"op\"]]}}}]}",
            "test", "test"), skeleton, new CompileOptions(0, opset));

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

    // Declared primitives on the tiny skeleton: C = 4 channels in and out, 8 x 8 kept by "same" padding
    // p = d * (k - 1) / 2. Each row: cell params, cell buffers (2 per BN channel), cell MACs.
    [Theory]
    // conv k3 d2: weight 4*4*3*3 = 144, BN 8. MACs 4*8*8 outputs * 4*3*3 taps = 9,216: the same as an
    // undilated conv3x3 (dilation spaces the 9 taps out over a 5x5 area, it adds none).
    [InlineData("""{"kind": "conv", "kernel": 3, "dilation": 2}""", 144 + 8, 8, 4 * 64 * 4 * 9)]
    // conv k5: weight 4*4*25 = 400, BN 8; MACs 4*64 * 4*25.
    [InlineData("""{"kind": "conv", "kernel": 5}""", 400 + 8, 8, 4 * 64 * 4 * 25)]
    // conv k7 d4 act none: pad 12, the taps span 25 pixels; weight 4*4*49 = 784, BN 8; MACs 4*64 * 4*49.
    [InlineData("""{"kind": "conv", "kernel": 7, "dilation": 4, "act": "none"}""", 784 + 8, 8, 4 * 64 * 4 * 49)]
    // conv k1 relu6: weight 16, BN 8; Clip's min and max are constants, counted in neither params nor buffers.
    [InlineData("""{"kind": "conv", "kernel": 1, "act": "relu6"}""", 16 + 8, 8, 4 * 64 * 4)]
    // dwconv k5 d3: group 4, one input channel per group: weight 4*1*25 = 100, BN 8; MACs 4*64 * 1*25.
    [InlineData("""{"kind": "dwconv", "kernel": 5, "dilation": 3}""", 100 + 8, 8, 4 * 64 * 25)]
    // sepconv k5 d2: depthwise 4*1*25 = 100, pointwise 4*4 = 16, BN 8; MACs 4*64*25 + 4*64*4 = 7,424.
    [InlineData("""{"kind": "sepconv", "kernel": 5, "dilation": 2}""", 100 + 16 + 8, 8, 4 * 64 * 25 + 4 * 64 * 4)]
    // sepconv k3 repeat 2: two rounds of (depthwise 36 + pointwise 16 + BN 8), two BNs of buffers;
    // MACs 2 * (4*64*9 + 4*64*4) = 6,656.
    [InlineData("""{"kind": "sepconv", "kernel": 3, "repeat": 2}""", 2 * (36 + 16 + 8), 16, 2 * (4 * 64 * 9 + 4 * 64 * 4))]
    // factorized k7: Conv 1x7 4->4 weight 4*4*1*7 = 112, Conv 7x1 4->4 weight 112, BN 8. A k x 1 conv is
    // k MACs per output element per input channel: each conv 4*64 outputs * 4 channels * 7 = 7,168.
    [InlineData("""{"kind": "factorized", "kernel": 7}""", 112 + 112 + 8, 8, 2 * 4 * 64 * 4 * 7)]
    // Pools of any window: no weights, no MACs (contract section 4 counts Conv and Gemm only).
    [InlineData("""{"kind": "maxpool", "kernel": 5}""", 0, 0, 0)]
    [InlineData("""{"kind": "avgpool", "kernel": 7}""", 0, 0, 0)]
    // mbconv k3 expand 1 se 0: no expansion (E = 4); depthwise 4*9 = 36 + BN 8; projection 4*4 = 16 + BN 8.
    // MACs 4*64*9 + 4*64*4 = 3,328.
    [InlineData("""{"kind": "mbconv", "kernel": 3, "expand": 1}""", 36 + 8 + 16 + 8, 16, 4 * 64 * 9 + 4 * 64 * 4)]
    // mbconv k3, expand 6 (default), se 0.25, silu: E = 24, R = max(1, floor(4 * 0.25)) = 1.
    //   expand 1x1 4->24: 96 + BN 48             MACs 24*64*4  = 6,144
    //   depthwise 3x3 group 24: 24*9 = 216 + BN 48  MACs 24*64*9 = 13,824
    //   squeeze 1x1 24->1 with bias: 24 + 1       MACs 1 * 1*1 * 24 = 24 (at 1x1 after the global pool)
    //   excite 1x1 1->24 with bias: 24 + 24      MACs 24 * 1*1 * 1 = 24
    //   project 1x1 24->4: 96 + BN 8             MACs 4*64*24  = 6,144
    // params 585, buffers 48 + 48 + 8 = 104, MACs 26,160.
    [InlineData("""{"kind": "mbconv", "kernel": 3, "se": 0.25, "act": "silu"}""", 585, 104, 26160)]
    // mbconv k5 expand 2 se 0.1 act none: E = 8, R = max(1, floor(0.4)) = 1 (A' is Relu, no weights).
    //   expand 4->8: 32 + 16; depthwise 8*25 = 200 + 16; squeeze 8->1: 8 + 1; excite 1->8: 8 + 8; project 8->4: 32 + 8.
    // params 329, buffers 16 + 16 + 8 = 40, MACs 8*64*4 + 8*64*25 + 8 + 8 + 4*64*8 = 16,912.
    [InlineData("""{"kind": "mbconv", "kernel": 5, "expand": 2, "se": 0.1, "act": "none"}""", 329, 40, 16912)]
    // mbconv k3 expand 1 se 1: E = 4, R = max(1, floor(4 * 1)) = 4. depthwise 36 + 8; squeeze 4->4: 16 + 4;
    // excite 4->4: 16 + 4; project 16 + 8. params 108, buffers 16, MACs 4*64*9 + 16 + 16 + 4*64*4 = 3,360.
    [InlineData("""{"kind": "mbconv", "kernel": 3, "expand": 1, "se": 1}""", 108, 16, 3360)]
    public void EachDeclaredKindCostsWhatTheConvDefinitionSays(string declaration, long cellParams, long cellBuffers, long cellMacs)
    {
        var model = CompileDeclared(declaration, Tiny);
        Assert.Equal(StemParams + cellParams + HeadParams, model.Figures.Params);
        Assert.Equal(StemBuffers + cellBuffers, model.Figures.Buffers);
        Assert.Equal(StemMacs + cellMacs + HeadMacs, model.Figures.Macs);
        Assert.Equal([5], model.OutputShape.Dims);
    }

    [Fact]
    public void DilationKeepsTheSideWithSamePadding()
    {
        // ONNX Conv output side floor((in + 2p - d*(k-1) - 1) / 1) + 1 with k 7, d 4, p = d*(k-1)/2 = 12:
        // (8 + 24 - 24 - 1) + 1 = 8. Every tensor of the cell stays 4 x 8 x 8.
        var model = CompileDeclared("""{"kind": "dwconv", "kernel": 7, "dilation": 4}""", Tiny);
        Assert.All(model.Network.Network.Ops.Where(op => op.Name.StartsWith("stage0/", StringComparison.Ordinal)),
            op => Assert.Equal([4, 8, 8], model.Network[op.Output].Dims));
    }

    /// <summary>
    /// Op counts of the activations (contract 3.1): relu6 is one Clip; silu a Sigmoid and a Mul;
    /// hard-swish one HardSwish from opset 14, and at opset 13 a HardSigmoid and a Mul; none adds
    /// nothing. The stem's Relu and the head's GlobalAveragePool, Flatten and Gemm are always there.
    /// </summary>
    [Theory]
    [InlineData("relu6", 17, "BatchNormalization=2 Clip=1 Conv=2 Flatten=1 Gemm=1 GlobalAveragePool=1 Relu=1")]
    [InlineData("silu", 17, "BatchNormalization=2 Conv=2 Flatten=1 Gemm=1 GlobalAveragePool=1 Mul=1 Relu=1 Sigmoid=1")]
    [InlineData("hardswish", 17, "BatchNormalization=2 Conv=2 Flatten=1 Gemm=1 GlobalAveragePool=1 HardSwish=1 Relu=1")]
    [InlineData("hardswish", 14, "BatchNormalization=2 Conv=2 Flatten=1 Gemm=1 GlobalAveragePool=1 HardSwish=1 Relu=1")]
    [InlineData("hardswish", 13, "BatchNormalization=2 Conv=2 Flatten=1 Gemm=1 GlobalAveragePool=1 HardSigmoid=1 Mul=1 Relu=1")]
    [InlineData("none", 17, "BatchNormalization=2 Conv=2 Flatten=1 Gemm=1 GlobalAveragePool=1 Relu=1")]
    public void ActivationsLowerToTheirOps(string act, int opset, string ops)
    {
        var model = CompileDeclared($$"""{"kind": "conv", "kernel": 3, "act": "{{act}}"}""", Tiny, opset);
        Assert.Equal(ops, string.Join(" ", model.Figures.OpCounts.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => $"{p.Key}={p.Value}")));
    }

    [Fact]
    public void InvertedBottleneckWithSqueezeHasItsOps()
    {
        // expand (Conv, BN, silu), depthwise (Conv, BN, silu), squeeze (GlobalAveragePool, Conv, silu,
        // Conv, Sigmoid, Mul), project (Conv, BN); silu = Sigmoid + Mul. Plus stem Conv/BN/Relu and head.
        var model = CompileDeclared("""{"kind": "mbconv", "kernel": 3, "se": 0.25, "act": "silu"}""", Tiny);
        Assert.Equal("BatchNormalization=4 Conv=6 Flatten=1 Gemm=1 GlobalAveragePool=2 Mul=4 Relu=1 Sigmoid=4",
            string.Join(" ", model.Figures.OpCounts.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => $"{p.Key}={p.Value}")));
    }
}
