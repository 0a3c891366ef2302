using System.Buffers.Binary;
using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.OnnxFormat;
using CellCompiler.Tests.Support;
using Google.Protobuf;

namespace CellCompiler.Tests;

/// <summary>
/// Contract section 3, "Weights": the same genotype, skeleton, seed and options give a
/// byte-identical .onnx file; another seed changes only weight values; weights follow the
/// stated distributions; metadata records genotype_hash, skeleton and seed.
/// </summary>
public sealed class DeterminismTests
{
    private static readonly string GenotypePath = RepoPaths.Fixture("tidepool-h3.json");

    private static CompiledModel CompileProxy(long seed) =>
        Compiler.Compile(GenotypeReader.ReadFile(GenotypePath), SkeletonReader.Resolve("proxy"), new CompileOptions(Seed: seed));

    [Fact]
    public void Same_inputs_and_seed_give_byte_identical_models_in_process()
    {
        var first = CompileProxy(7);
        var second = CompileProxy(7);

        Assert.True(first.OnnxBytes.Length > 100_000, $"the proxy model of tidepool-h3 should hold real weights, got {first.OnnxBytes.Length} bytes");
        Assert.Equal(first.OnnxBytes.Length, second.OnnxBytes.Length);
        Assert.True(first.OnnxBytes.AsSpan().SequenceEqual(second.OnnxBytes), "two compilations with seed 7 differ");
        Assert.Equal(first.Hash, second.Hash);
        Assert.Equal(first.Figures.Params, second.Figures.Params);
    }

    [Theory]
    [InlineData("tidepool-h3.json", "proxy")]
    [InlineData("tidepool-flat11.json", "proxy")]
    [InlineData("tidepool-deadcode.json", "tidepool-skeleton.json")]
    public void Same_inputs_and_seed_give_byte_identical_files_through_the_cli(string fixture, string skeleton)
    {
        using var temp = new TempFolder();
        var skeletonArg = skeleton.EndsWith(".json", StringComparison.Ordinal) ? RepoPaths.Fixture(skeleton) : skeleton;
        var a = temp.File("a.onnx");
        var b = temp.File("b.onnx");

        foreach (var output in new[] { a, b })
        {
            var result = ProcessRunner.Cellc("compile", RepoPaths.Fixture(fixture), "--skeleton", skeletonArg, "--seed", "7", "-o", output);
            Assert.True(result.ExitCode == 0, $"cellc compile {fixture} exited {result.ExitCode}:\n{result.Stderr}");
        }

        var bytesA = File.ReadAllBytes(a);
        var bytesB = File.ReadAllBytes(b);
        Assert.True(bytesA.Length > 10_000, $"{a} holds only {bytesA.Length} bytes");
        Assert.True(bytesA.AsSpan().SequenceEqual(bytesB), $"two CLI runs of {fixture} with seed 7 wrote different files");

        // The CLI adds nothing of its own: its file is exactly what the library produces.
        var inProcess = Compiler.Compile(GenotypeReader.ReadFile(RepoPaths.Fixture(fixture)), SkeletonReader.Resolve(skeletonArg), new CompileOptions(Seed: 7));
        Assert.True(bytesA.AsSpan().SequenceEqual(inProcess.OnnxBytes), "the CLI's file differs from Compiler.Compile with the same inputs");
        Assert.DoesNotContain(Directory.EnumerateFiles(temp.Path), f => f.EndsWith(".tmp", StringComparison.Ordinal));
    }

    [Fact]
    public void Another_seed_changes_only_weight_values()
    {
        var seven = CompileProxy(7);
        var eight = CompileProxy(8);
        Assert.Equal(seven.Hash, eight.Hash);
        Assert.Equal(seven.Figures.Params, eight.Figures.Params);
        Assert.Equal(seven.Figures.Macs, eight.Figures.Macs);
        Assert.False(seven.OnnxBytes.AsSpan().SequenceEqual(eight.OnnxBytes), "seeds 7 and 8 gave the same file");

        var modelA = ModelProto.Parser.ParseFrom(seven.OnnxBytes);
        var modelB = ModelProto.Parser.ParseFrom(eight.OnnxBytes);
        Assert.Equal("7", Metadata(modelA)["seed"]);
        Assert.Equal("8", Metadata(modelB)["seed"]);

        // Initializers: same names, dims, types, in the same order.
        var initA = modelA.Graph.Initializer;
        var initB = modelB.Graph.Initializer;
        Assert.Equal(initA.Count, initB.Count);
        for (var i = 0; i < initA.Count; i++)
        {
            Assert.Equal(initA[i].Name, initB[i].Name);
            Assert.Equal(initA[i].Dims, initB[i].Dims);
            Assert.Equal(initA[i].DataType, initB[i].DataType);
            Assert.Equal(initA[i].RawData.Length, initB[i].RawData.Length);
        }

        // Which initializers are drawn (Conv and Gemm weights) and which are constants (BN, Gemm bias).
        var roles = Roles(modelA.Graph);
        var convWeights = roles.Where(r => r.Value == Role.ConvWeight).Select(r => r.Key).ToHashSet();
        var constants = roles.Where(r => r.Value == Role.Constant).Select(r => r.Key).ToHashSet();
        Assert.True(convWeights.Count >= 100, $"tidepool-h3 on proxy should have over 100 conv weights, found {convWeights.Count}");
        Assert.Equal(roles.Count, initA.Count);

        var byName = initB.ToDictionary(t => t.Name);
        var differingConvs = 0;
        foreach (var a in initA)
        {
            var b = byName[a.Name];
            if (convWeights.Contains(a.Name) && !a.RawData.Equals(b.RawData)) differingConvs++;
            if (constants.Contains(a.Name))
                Assert.True(a.RawData.Equals(b.RawData), $"{a.Name} is a constant but changed with the seed");
        }
        // Each tensor has its own stream, so every conv weight changes with the seed.
        Assert.Equal(convWeights.Count, differingConvs);
        var gemm = roles.Single(r => r.Value == Role.GemmWeight).Key;
        Assert.False(initA.Single(t => t.Name == gemm).RawData.Equals(byName[gemm].RawData), "the Gemm weight did not change with the seed");
        Assert.All(constants, name => Assert.True(
            name.EndsWith(".scale") || name.EndsWith(".bias") || name.EndsWith(".mean") || name.EndsWith(".var"), name));

        // Everything else is identical once weight values and the seed entry are removed.
        Assert.Equal(WithoutWeightsAndSeed(modelA), WithoutWeightsAndSeed(modelB));
    }

    [Fact]
    public void Metadata_records_genotype_hash_skeleton_and_seed()
    {
        var compiled = CompileProxy(7);
        var model = ModelProto.Parser.ParseFrom(compiled.OnnxBytes);
        var metadata = Metadata(model);

        Assert.Equal(compiled.Hash, metadata["genotype_hash"]);
        Assert.Matches("^[0-9a-f]{16,}$", metadata["genotype_hash"]);
        Assert.Equal("7", metadata["seed"]);

        var skeletonJson = metadata["skeleton"];
        Assert.Equal(compiled.Skeleton.ToJson(), skeletonJson);
        Assert.Equal(SkeletonPresets.All["proxy"].ToJson(), skeletonJson);
        using var document = JsonDocument.Parse(skeletonJson);
        var root = document.RootElement;
        Assert.Equal("skeleton/1", root.GetProperty("format").GetString());
        Assert.Equal(3, root.GetProperty("input").GetProperty("channels").GetInt32());
        Assert.Equal(32, root.GetProperty("input").GetProperty("height").GetInt32());
        Assert.Equal(32, root.GetProperty("input").GetProperty("width").GetInt32());
        Assert.Equal(10, root.GetProperty("classes").GetInt32());
        Assert.Equal(new[] { (1, 16), (1, 32), (1, 64) },
            root.GetProperty("stages").EnumerateArray().Select(s => (s.GetProperty("cells").GetInt32(), s.GetProperty("channels").GetInt32())).ToArray());
        Assert.Equal("sepconv3x3", root.GetProperty("reduction").GetString());
        Assert.Equal("concat", root.GetProperty("merge").GetString());

        // The recorded skeleton resolves back to the same skeleton.
        Assert.Equal(compiled.Skeleton.ToJson(), SkeletonReader.Parse(System.Text.Encoding.UTF8.GetBytes(skeletonJson), "metadata").ToJson());
    }

    /// <summary>
    /// He-normal initialisation: std = sqrt(2 / fan_in) (K. He, X. Zhang, S. Ren, J. Sun, "Delving Deep
    /// into Rectifiers: Surpassing Human-Level Performance on ImageNet Classification", ICCV 2015, eq. 10).
    /// </summary>
    [Fact]
    public void Conv_weights_are_he_normal()
    {
        var model = ModelProto.Parser.ParseFrom(CompileProxy(7).OnnxBytes);
        var roles = Roles(model.Graph);
        var convs = model.Graph.Initializer.Where(t => roles[t.Name] == Role.ConvWeight).ToList();

        // One large 1x1 conv with fan_in 64 (a conv1x1 of a stage-2 cell, 64 -> 64 channels): 4096 values.
        var big = convs.First(t => t.Dims.SequenceEqual(new long[] { 64, 64, 1, 1 }));
        var values = Floats(big);
        Assert.Equal(4096, values.Length);
        var expectedStd = Math.Sqrt(2.0 / 64); // 0.1768
        var (mean, std) = MeanStd(values);
        // Standard error of the mean is expectedStd / 64 = 0.0028; allow about 5 of them.
        Assert.True(Math.Abs(mean) < 0.014, $"{big.Name}: mean {mean:F5} should be about 0");
        // Standard error of the std is about 1.1% at n = 4096, so 5% is a wide margin.
        Assert.True(Math.Abs(std / expectedStd - 1) < 0.05, $"{big.Name}: std {std:F5}, He-normal expects {expectedStd:F5}");
        // A normal sample of 4096 has values beyond 2.5 std (about 1.2% of them) but none wildly far.
        var beyond = values.Count(v => Math.Abs(v) > 2.5 * expectedStd) / (double)values.Length;
        Assert.InRange(beyond, 0.005, 0.025);
        Assert.True(values.Max(v => Math.Abs(v)) < 6 * expectedStd);

        // Every conv, pooled after dividing by its own sqrt(2 / fan_in): standard normal overall.
        var pooled = new List<double>();
        foreach (var conv in convs)
        {
            var fanIn = conv.Dims[1] * conv.Dims[2] * conv.Dims[3];
            var scale = Math.Sqrt(2.0 / fanIn);
            pooled.AddRange(Floats(conv).Select(v => v / scale));
        }
        Assert.True(pooled.Count > 100_000, $"only {pooled.Count} conv weights");
        var (pooledMean, pooledStd) = MeanStd(pooled.ToArray());
        Assert.True(Math.Abs(pooledMean) < 0.01, $"pooled normalised mean {pooledMean:F5}");
        Assert.True(Math.Abs(pooledStd - 1) < 0.02, $"pooled normalised std {pooledStd:F5}");

        // Depthwise convs (group = Cin) have fan_in 9 and must be scaled by it, not by Cin * 9.
        var depthwise = convs.First(t => t.Dims[1] == 1 && t.Dims[2] == 3 && t.Dims[0] >= 32);
        var (_, dwStd) = MeanStd(Floats(depthwise));
        Assert.True(Math.Abs(dwStd / Math.Sqrt(2.0 / 9) - 1) < 0.15, $"{depthwise.Name}: std {dwStd:F4}, expected {Math.Sqrt(2.0 / 9):F4}");
    }

    /// <summary>Gemm weight uniform in +-1/sqrt(in): common practice, the bound of PyTorch's nn.Linear default init.</summary>
    [Fact]
    public void Gemm_weight_is_uniform_within_one_over_sqrt_in_and_bias_is_zero()
    {
        var model = ModelProto.Parser.ParseFrom(CompileProxy(7).OnnxBytes);
        var gemm = model.Graph.Node.Single(n => n.OpType == "Gemm");
        var weight = model.Graph.Initializer.Single(t => t.Name == gemm.Input[1]);
        var bias = model.Graph.Initializer.Single(t => t.Name == gemm.Input[2]);

        Assert.Equal(new long[] { 10, 64 }, weight.Dims);
        var values = Floats(weight);
        var bound = 1 / Math.Sqrt(64); // 0.125
        Assert.All(values, v => Assert.InRange(v, -bound, bound));
        // Uniform, not squeezed: 640 draws reach close to both ends, and the std is bound / sqrt(3).
        Assert.True(values.Max() > 0.9 * bound && values.Min() < -0.9 * bound, $"range [{values.Min()}, {values.Max()}]");
        var (mean, std) = MeanStd(values);
        Assert.True(Math.Abs(mean) < 0.02, $"mean {mean:F5}");
        Assert.True(Math.Abs(std / (bound / Math.Sqrt(3)) - 1) < 0.1, $"std {std:F5}, uniform expects {bound / Math.Sqrt(3):F5}");

        Assert.Equal(new long[] { 10 }, bias.Dims);
        Assert.All(Floats(bias), v => Assert.Equal(0f, v));
    }

    [Fact]
    public void Batch_norm_constants_are_scale_1_bias_0_mean_0_var_1()
    {
        var model = ModelProto.Parser.ParseFrom(CompileProxy(7).OnnxBytes);
        var initializers = model.Graph.Initializer.ToDictionary(t => t.Name);
        var norms = model.Graph.Node.Where(n => n.OpType == "BatchNormalization").ToList();
        Assert.NotEmpty(norms);
        foreach (var bn in norms)
        {
            var expected = new[] { 1f, 0f, 0f, 1f }; // scale, bias, mean, var
            for (var k = 0; k < 4; k++)
                Assert.All(Floats(initializers[bn.Input[k + 1]]), v => Assert.Equal(expected[k], v));
        }
    }

    // ---------------------------------------------------------------- helpers

    private enum Role { ConvWeight, GemmWeight, Constant }

    /// <summary>Classifies every initializer by the node input it feeds.</summary>
    private static Dictionary<string, Role> Roles(GraphProto graph)
    {
        var roles = new Dictionary<string, Role>();
        var initializers = graph.Initializer.Select(t => t.Name).ToHashSet();
        foreach (var node in graph.Node)
            for (var k = 1; k < node.Input.Count; k++)
            {
                if (!initializers.Contains(node.Input[k])) continue;
                roles[node.Input[k]] = (node.OpType, k) switch
                {
                    ("Conv", 1) => Role.ConvWeight,
                    ("Gemm", 1) => Role.GemmWeight,
                    ("Gemm", 2) or ("BatchNormalization", _) => Role.Constant,
                    _ => throw new InvalidOperationException($"unexpected initializer {node.Input[k]} at input {k} of {node.OpType}"),
                };
            }
        return roles;
    }

    private static Dictionary<string, string> Metadata(ModelProto model) =>
        model.MetadataProps.ToDictionary(p => p.Key, p => p.Value);

    private static ModelProto WithoutWeightsAndSeed(ModelProto model)
    {
        var copy = model.Clone();
        foreach (var tensor in copy.Graph.Initializer)
            tensor.RawData = ByteString.Empty;
        var seed = copy.MetadataProps.Single(p => p.Key == "seed");
        copy.MetadataProps.Remove(seed);
        return copy;
    }

    private static float[] Floats(TensorProto tensor)
    {
        Assert.Equal((int)TensorProto.Types.DataType.Float, tensor.DataType);
        var bytes = tensor.RawData.Span;
        var values = new float[bytes.Length / 4];
        for (var i = 0; i < values.Length; i++)
            values[i] = BinaryPrimitives.ReadSingleLittleEndian(bytes.Slice(i * 4, 4));
        Assert.Equal(tensor.Dims.Aggregate(1L, (a, d) => a * d), values.Length);
        return values;
    }

    private static (double Mean, double Std) MeanStd(IReadOnlyCollection<float> values) =>
        MeanStd(values.Select(v => (double)v).ToArray());

    private static (double Mean, double Std) MeanStd(double[] values)
    {
        var mean = values.Average();
        var variance = values.Sum(v => (v - mean) * (v - mean)) / values.Length;
        return (mean, Math.Sqrt(variance));
    }
}
