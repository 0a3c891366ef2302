using System.Buffers.Binary;
using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;
using CellCompiler.TorchExport;
using CellCompiler.Vocabulary;

namespace CellCompiler.Tests;

/// <summary>
/// Random genotypes with random declared primitives, for the export tests: kinds are drawn from
/// <see cref="PrimitiveKinds.All"/> (a kind added later is drawn too), every parameter a kind takes
/// within the contract's ranges (section 3.1), and level 0 mixes the built-ins, the declarations,
/// identity and none. Deterministic per seed.
/// </summary>
public static class ExportTorchGenotypes
{
    // Ratios whose floors differ at the widths the presets use (16 to 512) and at odd widths.
    private static readonly decimal[] SeRatios = [0m, 0.0625m, 0.1m, 0.125m, 0.25m, 0.3m, 0.33m, 0.5m, 0.7m, 1m];

    public static string Json(int seed, int maxLevels, int maxNodes)
    {
        var random = new Random(seed);
        var primitives = new Dictionary<string, Dictionary<string, object>>();
        var declarationCount = random.Next(1, 5);
        for (var i = 0; i < declarationCount; i++)
        {
            var kind = PrimitiveKinds.All[random.Next(PrimitiveKinds.All.Count)];
            primitives[$"d{i}_{kind.Name}"] = Declaration(kind, random);
        }

        var levelZero = BuiltinPrimitives.All.Select(p => p.Name)
            .Concat(primitives.Keys).Concat(primitives.Keys).Concat(primitives.Keys) // declarations three times as likely
            .Concat(["identity", "none"]).ToArray();
        var levelCount = random.Next(1, maxLevels + 1);
        var levels = new List<object>();
        var belowNames = new List<string>();
        for (var k = 0; k < levelCount; k++)
        {
            var nodes = random.Next(2, maxNodes + 1);
            var motifCount = k == levelCount - 1 ? 1 : random.Next(1, 3);
            var alphabet = k == 0 ? levelZero : belowNames.Concat(belowNames).Concat(["identity", "none"]).ToArray();
            var motifs = new Dictionary<string, object>();
            var names = new List<string>();
            for (var m = 0; m < motifCount; m++)
            {
                var name = k == levelCount - 1 ? "cell" : $"m{k}-{m}";
                names.Add(name);
                var edges = new List<object[]>();
                for (var j = 1; j < nodes; j++)
                for (var i = 0; i < j; i++)
                {
                    if (i != j - 1 && random.NextDouble() > 0.45) continue;
                    edges.Add([i, j, alphabet[random.Next(alphabet.Length)]]);
                }
                motifs[name] = new { edges };
            }
            levels.Add(new { nodes, motifs });
            belowNames = names;
        }
        return JsonSerializer.Serialize(new { format = "genotype/1", name = $"export-{seed}", primitives, levels });
    }

    private static Dictionary<string, object> Declaration(PrimitiveKind kind, Random random)
    {
        var declaration = new Dictionary<string, object> { ["kind"] = kind.Name };
        foreach (var parameter in Enum.GetValues<PrimitiveParameter>())
        {
            if (!kind.Takes(parameter)) continue;
            // The kernel is required; other parameters are left at their defaults a third of the time.
            if (parameter != PrimitiveParameter.Kernel && random.Next(3) == 0) continue;
            declaration[PrimitiveDefinition.ParameterName(parameter)] = parameter switch
            {
                PrimitiveParameter.Kernel => kind.MinKernel + 2 * random.Next((PrimitiveKind.MaxKernel - kind.MinKernel) / 2 + 1),
                PrimitiveParameter.Dilation => random.Next(1, 5),
                PrimitiveParameter.Repeat => random.Next(1, 3),
                PrimitiveParameter.Expand => random.Next(1, 9),
                PrimitiveParameter.Se => SeRatios[random.Next(SeRatios.Length)],
                PrimitiveParameter.Act => Activations.Name(Activations.All[random.Next(Activations.All.Count)]),
                _ => throw new InvalidOperationException($"no range for {parameter}"),
            };
        }
        return declaration;
    }

    /// <summary>The definitions a genotype's network applies (live edges only), or null for a dead cell.</summary>
    public static IReadOnlyList<PrimitiveDefinition>? UsedDefinitions(Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        if (!liveness.Cell(genotype).OutputIsLive) return null;
        var motifs = MotifClasses.Used(genotype, liveness);
        return MotifClasses.UsedPrimitives(liveness, motifs).Select(genotype.Primitives.Get).ToList();
    }
}

/// <summary>One genotype and skeleton to export, compile and compare.</summary>
public sealed record ExportCase(string Id, Genotype Genotype, Skeleton Skeleton, int Opset = 17, long Seed = 5);

/// <summary>
/// Exports and compiles each case, runs the ONNX model on ONNX Runtime (CPU) at batch 2, and hands
/// the generated file, the model, the input and Runtime's logits to tests/reference/torch_export_check.py,
/// which loads the weights into the PyTorch modules (Debian's python3-torch) and reports their figures,
/// their logits, and one training step. Asserts on every case.
/// </summary>
public static class ExportTorchBatch
{
    /// <summary>Relative tolerance of PyTorch's logits against ONNX Runtime's, scaled by max(1, max |logit|).</summary>
    public const double Tolerance = 1e-4;

    public static void Check(IReadOnlyList<ExportCase> cases)
    {
        using var folder = new TempFolder();
        var lines = new List<string>();
        var models = new Dictionary<string, CompiledModel>();
        foreach (var c in cases)
        {
            var model = Compiler.Compile(c.Genotype, c.Skeleton, new CompileOptions(c.Seed, c.Opset));
            models[c.Id] = model;
            var modulePath = folder.File(c.Id + ".py");
            File.WriteAllBytes(modulePath, TorchExporter.Export(c.Genotype, model).Bytes);
            var onnxPath = folder.File(c.Id + ".onnx");
            File.WriteAllBytes(onnxPath, model.OnnxBytes);
            lines.Add(Line(c.Id, modulePath, onnxPath, model.InputShape.Dims, folder));
        }
        var results = PythonReference.RunJsonLines("torch_export_check.py", folder.Write("batch.jsonl", string.Join("\n", lines) + "\n"));
        Assert.Equal(cases.Count, results.Count);
        foreach (var result in results)
        {
            var model = models[result.GetProperty("id").GetString()!];
            AssertCase(result, model.Figures.Params, model.Figures.Buffers, model.OutputShape.Channels);
        }
    }

    /// <summary>
    /// One line of the batch file. The logits are ONNX Runtime's (CPU, the graph as written) for a
    /// seeded input at batch 2; <paramref name="inputDims"/> is [C, H, W].
    /// </summary>
    public static string Line(string id, string modulePath, string onnxPath, IReadOnlyList<int> inputDims, TempFolder folder)
    {
        long[] shape = [2, inputDims[0], inputDims[1], inputDims[2]];
        var images = ForwardPass.RandomInput(shape, 17);
        // Unoptimized: fusions change float32 rounding (measured on a deep sum-merge network at 224x224:
        // 2.4e-4 relative from float64 with every optimization, 3e-5 without, PyTorch's own float32 4e-5).
        using var pass = new ForwardPass(File.ReadAllBytes(onnxPath), ForwardPass.AsWritten);
        var logits = pass.Run(images, shape);
        Assert.True(logits.AllFinite, $"{id}: ONNX Runtime gave non-finite logits");
        var inputPath = folder.File(id + ".input");
        var logitsPath = folder.File(id + ".logits");
        File.WriteAllBytes(inputPath, LittleEndian(images));
        File.WriteAllBytes(logitsPath, LittleEndian(logits.Values));
        // Small batches at 224x224 keep a CPU training step short; BatchNorm still sees many values per channel.
        var trainBatch = inputDims[1] * inputDims[2] > 64 * 64 ? 2 : 4;
        return JsonSerializer.Serialize(new Dictionary<string, object>
        {
            ["id"] = id,
            ["module"] = modulePath,
            ["onnx"] = onnxPath,
            ["input"] = inputPath,
            ["input_shape"] = shape,
            ["logits"] = logitsPath,
            ["train_batch"] = trainBatch,
        });
    }

    /// <param name="params_">Our params figure (as `cellc compile --json` reports it).</param>
    /// <param name="buffers">Our buffers figure.</param>
    /// <param name="classes">The logits per sample.</param>
    public static void AssertCase(JsonElement result, long params_, long buffers, int classes)
    {
        var id = result.GetProperty("id").GetString();
        Assert.False(result.TryGetProperty("error", out var error), $"{id}: {error}\n{(result.TryGetProperty("trace", out var t) ? t : default)}");
        Assert.True(result.GetProperty("compiled").GetBoolean(), $"{id}: py_compile");
        // Exactly our params and buffers: PyTorch's numel over parameters and over running statistics.
        Assert.Equal((id, params_), (id, result.GetProperty("params").GetInt64()));
        Assert.Equal((id, buffers), (id, result.GetProperty("buffers").GetInt64()));
        Assert.True(result.GetProperty("readers_agree").GetBoolean(), $"{id}: the onnx package and the built-in reader load different weights");
        Assert.Equal([2, classes], result.GetProperty("logits_shape").EnumerateArray().Select(e => e.GetInt32()));
        var diff = Number(result, "max_abs_diff");
        var scale = Math.Max(1, Number(result, "max_abs_logit"));
        Assert.True(diff <= Tolerance * scale, $"{id}: PyTorch's logits differ from ONNX Runtime's by {diff} (scale {scale})");
        // Trainable: every parameter gets a gradient, the stem's is nonzero, one SGD step lowers the loss.
        Assert.Empty(result.GetProperty("no_grad").EnumerateArray());
        Assert.True(Number(result, "stem_grad_norm") > 0, $"{id}: no gradient reaches the stem");
        var before = Number(result, "loss_before");
        var after = Number(result, "loss_after");
        Assert.True(double.IsFinite(before) && after < before, $"{id}: one SGD step took the loss from {before} to {after}");
    }

    /// <summary>A figure of the script's answer; "nan" and "inf" (JSON has no such numbers) fail the test with their name.</summary>
    private static double Number(JsonElement result, string name)
    {
        var value = result.GetProperty(name);
        Assert.True(value.ValueKind == JsonValueKind.Number, $"{result.GetProperty("id")}: {name} is {value}");
        return value.GetDouble();
    }

    private static byte[] LittleEndian(float[] values)
    {
        var bytes = new byte[values.Length * sizeof(float)];
        for (var i = 0; i < values.Length; i++)
            BinaryPrimitives.WriteSingleLittleEndian(bytes.AsSpan(i * sizeof(float)), values[i]);
        return bytes;
    }
}
