using Google.Protobuf;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.OnnxFormat;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>What the emitted ONNX file holds besides the weights (contract section 3, "ONNX").</summary>
public sealed class OnnxStructureTests
{
    private static (CompiledModel Model, ModelProto Proto) CompileFixture(string fixture, string preset = "proxy", int opset = 17)
    {
        var model = Compiler.Compile(GenotypeReader.ReadFile(RepoPaths.Fixture(fixture)), SkeletonPresets.All[preset], new CompileOptions(0, opset));
        return (model, ModelProto.Parser.ParseFrom(model.OnnxBytes));
    }

    [Fact]
    public void EveryIntermediateTensorHasAValueInfoWithItsFullShape()
    {
        var (model, proto) = CompileFixture("tidepool-h3.json");
        var graph = proto.Graph;
        var produced = graph.Node.SelectMany(n => n.Output).Where(o => o != "logits").ToList();
        var infos = graph.ValueInfo.ToDictionary(v => v.Name);
        Assert.Equal(produced.Count, infos.Count);
        foreach (var tensor in produced)
        {
            var dims = infos[tensor].Type.TensorType.Shape.Dim;
            Assert.Equal("N", dims[0].DimParam);
            Assert.Equal(model.Network[tensor].Dims.Select(d => (long)d), dims.Skip(1).Select(d => d.DimValue));
        }
        Assert.Equal(["N", "3", "32", "32"], graph.Input[0].Type.TensorType.Shape.Dim.Select(d => d.DimParam.Length > 0 ? d.DimParam : d.DimValue.ToString()));
        Assert.Equal("images", graph.Input[0].Name);
        Assert.Equal("logits", graph.Output[0].Name);
        Assert.Equal(["N", "10"], graph.Output[0].Type.TensorType.Shape.Dim.Select(d => d.DimParam.Length > 0 ? d.DimParam : d.DimValue.ToString()));
    }

    [Fact]
    public void NodeNamesLeadBackToStageCellMotifPathEdgeAndPrimitive()
    {
        var (_, proto) = CompileFixture("tidepool-h3.json");
        var names = proto.Graph.Node.Select(n => n.Name).ToList();
        Assert.Equal(names.Count, names.Distinct().Count());
        // Cell edge 0 applies motif reef; reef's edge 0 applies anemone; anemone's edge 0 is conv1x1.
        Assert.Contains("stage0/cell0/e0:reef/e0:anemone/e0:conv1x1/conv", names);
        Assert.Contains("stage2/cell0/e4:reef/e3:chiton/e0:conv3x3/bn", names);
        Assert.Contains("reduce0/dw", names);
        Assert.Contains("stem/conv", names);
        Assert.Contains("head/gemm", names);
        Assert.All(names, n => Assert.Matches("^(stem|stage\\d+/cell\\d+|reduce\\d+|head)/", n));
    }

    [Fact]
    public void MetadataHoldsHashSkeletonAndSeedAndVersionsAreSet()
    {
        var (model, proto) = CompileFixture("tidepool-flat11.json");
        var metadata = proto.MetadataProps.ToDictionary(p => p.Key, p => p.Value);
        Assert.Equal(model.Hash, metadata["genotype_hash"]);
        Assert.Equal(SkeletonPresets.All["proxy"].ToJson(), metadata["skeleton"]);
        Assert.Equal("0", metadata["seed"]);
        Assert.Equal(8, proto.IrVersion);
        Assert.Equal(17, proto.OpsetImport.Single().Version);
        Assert.Equal("", proto.OpsetImport.Single().Domain);
    }

    [Fact]
    public void BatchNormAndPoolAttributesFollowTheContract()
    {
        var (_, proto) = CompileFixture("tidepool-flat11.json");
        var bn = proto.Graph.Node.First(n => n.OpType == "BatchNormalization");
        Assert.Equal(1e-5f, bn.Attribute.Single(a => a.Name == "epsilon").F);
        Assert.Equal(0.9f, bn.Attribute.Single(a => a.Name == "momentum").F);
        var avg = proto.Graph.Node.First(n => n.OpType == "AveragePool");
        Assert.Equal(0, avg.Attribute.Single(a => a.Name == "count_include_pad").I);
        // Written with its value, not only its type (issue 8: readers of the proto2 schema require it).
        Assert.True(avg.Attribute.Single(a => a.Name == "count_include_pad").HasI);
        Assert.Equal([1L, 1, 1, 1], avg.Attribute.Single(a => a.Name == "pads").Ints);
        var depthwise = proto.Graph.Node.First(n => n.Name.EndsWith("e1:sepconv3x3/dw"));
        Assert.Equal(16, depthwise.Attribute.Single(a => a.Name == "group").I);
        var gemm = proto.Graph.Node.Single(n => n.OpType == "Gemm");
        Assert.Equal(1, gemm.Attribute.Single(a => a.Name == "transB").I);
    }

    /// <summary>
    /// Declared primitives (contract 3.1) emit the Conv and pool attributes of their parameters and the
    /// activation forms, under the node names fixed for the project (NodePath). One flat cell chains
    /// seven declared ops at C = 16 (stage 0 of the proxy preset).
    /// </summary>
    [Theory]
    [InlineData(13)]
    [InlineData(17)]
    public void DeclaredPrimitivesEmitTheirAttributesAndConstants(int opset)
    {
        const string json = """
            {"format": "genotype/1",
             "primitives": {
               "holey": {"kind": "conv", "kernel": 3, "dilation": 2},
               "strip": {"kind": "factorized", "kernel": 5},
               "clip": {"kind": "conv", "kernel": 1, "act": "relu6"},
               "hs": {"kind": "dwconv", "kernel": 3, "act": "hardswish"},
               "bneck": {"kind": "mbconv", "kernel": 3, "expand": 2, "se": 0.5},
               "pool5": {"kind": "maxpool", "kernel": 5},
               "avg7": {"kind": "avgpool", "kernel": 7}},
             "levels": [{"nodes": 8, "motifs": {"cell": {"edges": [
               [0, 1, "holey"], [1, 2, "strip"], [2, 3, "clip"], [3, 4, "hs"], [4, 5, "bneck"], [5, 6, "pool5"], [6, 7, "avg7"]]}}}]}
            """;
        var model = Compiler.Compile(GenotypeReader.Parse(json, "declared", "declared"), SkeletonPresets.All["proxy"], new CompileOptions(0, opset));
        var proto = ModelProto.Parser.ParseFrom(model.OnnxBytes);
        var nodes = proto.Graph.Node.ToDictionary(n => n.Name);
        var initializers = proto.Graph.Initializer.ToDictionary(t => t.Name);
        const string p = "stage0/cell0/";
        long[] Ints(string node, string attribute) => nodes[p + node].Attribute.Single(a => a.Name == attribute).Ints.ToArray();

        Assert.Equal([3L, 3], Ints("e0:holey/conv", "kernel_shape"));
        Assert.Equal([2L, 2], Ints("e0:holey/conv", "dilations"));
        Assert.Equal([2L, 2, 2, 2], Ints("e0:holey/conv", "pads"));
        Assert.Equal([1L, 5], Ints("e1:strip/row", "kernel_shape"));
        Assert.Equal([0L, 2, 0, 2], Ints("e1:strip/row", "pads"));
        Assert.Equal([5L, 1], Ints("e1:strip/col", "kernel_shape"));
        Assert.Equal([2L, 0, 2, 0], Ints("e1:strip/col", "pads"));

        // relu6: Clip(x, min, max) with scalar float initializers 0 and 6.
        var clip = nodes[p + "e2:clip/relu6"];
        Assert.Equal("Clip", clip.OpType);
        Assert.Equal([p + "e2:clip/bn", p + "e2:clip/relu6.min", p + "e2:clip/relu6.max"], clip.Input);
        foreach (var (suffix, value) in new[] { ("min", 0f), ("max", 6f) })
        {
            var bound = initializers[$"{p}e2:clip/relu6.{suffix}"];
            Assert.Empty(bound.Dims);
            Assert.Equal(value, BitConverter.ToSingle(bound.RawData.Span));
        }

        // hard-swish: HardSwish from opset 14; at 13 HardSigmoid(alpha 1/6, beta 0.5) then Mul(x, hsigmoid).
        var hardswish = nodes[p + "e3:hs/hardswish"];
        if (opset >= 14)
        {
            Assert.Equal("HardSwish", hardswish.OpType);
            Assert.Equal([p + "e3:hs/bn"], hardswish.Input);
        }
        else
        {
            var hsigmoid = nodes[p + "e3:hs/hardswish/hsigmoid"];
            Assert.Equal("HardSigmoid", hsigmoid.OpType);
            Assert.Equal(1f / 6, hsigmoid.Attribute.Single(a => a.Name == "alpha").F);
            Assert.Equal(0.5f, hsigmoid.Attribute.Single(a => a.Name == "beta").F);
            Assert.Equal("Mul", hardswish.OpType);
            Assert.Equal([p + "e3:hs/bn", p + "e3:hs/hardswish/hsigmoid"], hardswish.Input);
        }
        Assert.Equal(16, nodes[p + "e3:hs/conv"].Attribute.Single(a => a.Name == "group").I);

        // mbconv: E = 2 * 16 = 32, R = max(1, floor(16 * 0.5)) = 8; squeeze convs with zero biases; the gate
        // multiplies the depthwise output.
        Assert.Equal(32, nodes[p + "e4:bneck/dw/conv"].Attribute.Single(a => a.Name == "group").I);
        Assert.Equal([8L], initializers[p + "e4:bneck/se/reduce.bias"].Dims);
        Assert.Equal([32L], initializers[p + "e4:bneck/se/expand.bias"].Dims);
        Assert.All(new[] { "reduce", "expand" }, conv =>
            Assert.True(initializers[$"{p}e4:bneck/se/{conv}.bias"].RawData.Span.IndexOfAnyExcept((byte)0) < 0, conv + " bias is not zero"));
        Assert.Equal([p + "e4:bneck/dw/relu", p + "e4:bneck/se/sigmoid"], nodes[p + "e4:bneck/se/mul"].Input);
        Assert.Equal("GlobalAveragePool", nodes[p + "e4:bneck/se/gap"].OpType);
        Assert.False(nodes.ContainsKey(p + "e4:bneck/project/relu"));

        Assert.Equal([5L, 5], Ints("e5:pool5/pool", "kernel_shape"));
        Assert.Equal([2L, 2, 2, 2], Ints("e5:pool5/pool", "pads"));
        Assert.Equal([7L, 7], Ints("e6:avg7/pool", "kernel_shape"));
        Assert.Equal([3L, 3, 3, 3], Ints("e6:avg7/pool", "pads"));
        var countIncludePad = nodes[p + "e6:avg7/pool"].Attribute.Single(a => a.Name == "count_include_pad");
        Assert.True(countIncludePad.HasI);
        Assert.Equal(0, countIncludePad.I);
    }

    /// <summary>
    /// Every opset the CLI offers loads and runs in ONNX Runtime. (The ONNX reference checker here,
    /// Debian's python3-onnx 1.12, knows opsets up to 17, so the checker runs on 13..17 below.)
    /// </summary>
    [Theory]
    [InlineData(13)] [InlineData(14)] [InlineData(15)] [InlineData(16)] [InlineData(17)]
    [InlineData(18)] [InlineData(19)] [InlineData(20)] [InlineData(21)]
    public void EveryOfferedOpsetRunsInOnnxRuntime(int opset)
    {
        var (model, proto) = CompileFixture("tidepool-h3.json", opset: opset);
        Assert.Equal(opset, proto.OpsetImport.Single().Version);
        Assert.Equal(opset >= 21 ? 10 : opset >= 19 ? 9 : 8, proto.IrVersion);
        using var pass = new ForwardPass(model.OnnxBytes);
        long[] shape = [2, 3, 32, 32];
        var result = pass.Run(ForwardPass.RandomInput(shape, 1), shape);
        Assert.Equal([2L, 10], result.Shape);
        Assert.True(result.AllFinite);
    }

    [Fact]
    public void OlderOpsetsPassTheOnnxChecker()
    {
        using var folder = new TempFolder();
        var paths = new List<string>();
        foreach (var opset in new[] { 13, 14, 15, 16, 17 })
        {
            var (model, _) = CompileFixture("tidepool-flat11.json", opset: opset);
            var path = folder.File($"opset{opset}.onnx");
            File.WriteAllBytes(path, model.OnnxBytes);
            paths.Add(path);
        }
        var verdicts = PythonReference.RunJsonLines("onnx_check.py", paths.ToArray());
        Assert.All(verdicts, v => Assert.True(v.GetProperty("ok").GetBoolean(), v.ToString()));
        Assert.Equal(5, verdicts.Count);
    }
}

/// <summary>The one-pass writer must produce exactly the bytes the protobuf runtime writes for the same model.</summary>
public sealed class ModelWriterTests
{
    [Theory]
    [InlineData("tidepool-h3.json", "proxy")]
    [InlineData("tidepool-flat11.json", "full")]
    [InlineData("tidepool-deadcode.json", "full224")]
    public void OnePassBytesEqualTheProtobufRuntimeSerialization(string fixture, string preset)
    {
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture(fixture));
        var net = CellCompiler.Shapes.ShapeInference.Infer(CellCompiler.Lowering.Lowerer.Lower(genotype, SkeletonPresets.All[preset]));
        var options = new CellCompiler.Onnx.EmitOptions(4, 17, "g", [new("k", "v")]);
        var onePass = CellCompiler.Onnx.OnnxEmitter.Emit(net, options);
        var viaRuntime = CellCompiler.Onnx.OnnxEmitter.Build(net, options).ToByteArray();
        Assert.Equal(viaRuntime.Length, onePass.Length);
        Assert.True(viaRuntime.AsSpan().SequenceEqual(onePass), "bytes differ");
    }
}
