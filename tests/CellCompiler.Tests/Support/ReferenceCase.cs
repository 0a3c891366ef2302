using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Runtime;

namespace CellCompiler.Tests.Support;

/// <summary>One genotype + skeleton to check against the outside references.</summary>
public sealed record ReferenceCase(string Id, string GenotypeJson, Skeleton Skeleton);

/// <summary>
/// Checks a batch of cases against three references at once: the ONNX reference checker with
/// full shape inference (Debian's python3-onnx), ONNX Runtime on CPU (forward pass at batch 2),
/// and an independent PyTorch rebuild of the network (Debian's python3-torch) whose params,
/// buffers, MACs and output shape must equal the compiler's exactly.
/// </summary>
public static class ReferenceBatch
{
    private static string Compact(string json)
    {
        using var document = JsonDocument.Parse(json);
        return JsonSerializer.Serialize(document.RootElement);
    }

    public static void Check(IReadOnlyList<ReferenceCase> cases, int opset = 17)
    {
        using var folder = new TempFolder();
        var compiled = new Dictionary<string, CompiledModel?>();
        var modelPaths = new List<string>();
        var batchLines = new List<string>();
        foreach (var c in cases)
        {
            var genotype = GenotypeReader.Parse(c.GenotypeJson, c.Id, c.Id);
            CompiledModel? model = null;
            try { model = Compiler.Compile(genotype, c.Skeleton, new CompileOptions(Seed: 3, Opset: opset)); }
            catch (DeadCellException) { }
            compiled[c.Id] = model;
            if (model is not null)
            {
                var path = folder.File(c.Id + ".onnx");
                File.WriteAllBytes(path, model.OnnxBytes);
                modelPaths.Add(path);
            }
            batchLines.Add($"{{\"id\":{JsonSerializer.Serialize(c.Id)},\"genotype\":{Compact(c.GenotypeJson)},\"skeleton\":{c.Skeleton.ToJson()}}}");
        }

        // 1. ONNX reference checker (python3-onnx): check_model with full shape inference, strict.
        if (modelPaths.Count > 0)
        {
            var verdicts = PythonReference.RunJsonLines("onnx_check.py", modelPaths.ToArray());
            Assert.Equal(modelPaths.Count, verdicts.Count);
            var failures = verdicts.Where(v => !v.GetProperty("ok").GetBoolean()).Select(v => v.ToString()).ToList();
            Assert.True(failures.Count == 0, "ONNX checker rejected:\n" + string.Join("\n", failures));
        }

        // 2. ONNX Runtime, CPU: loads, and a forward pass at batch 2 gives finite logits of the inferred shape.
        foreach (var (id, model) in compiled)
        {
            if (model is null) continue;
            using var pass = new ForwardPass(model.OnnxBytes);
            var input = model.InputShape;
            long[] shape = [2, input.Channels, input.Height, input.Width];
            var result = pass.Run(ForwardPass.RandomInput(shape, 11), shape);
            Assert.Equal(new long[] { 2, model.OutputShape.Channels }, result.Shape);
            Assert.True(result.AllFinite, $"{id}: non-finite logits");
        }

        // 3. PyTorch rebuild (python3-torch), independent of the C# code: exact equality of figures.
        var batchFile = folder.Write("batch.jsonl", string.Join("\n", batchLines) + "\n");
        var answers = PythonReference.RunJsonLines("torch_reference.py", batchFile);
        Assert.Equal(cases.Count, answers.Count);
        foreach (var answer in answers)
        {
            var id = answer.GetProperty("id").GetString()!;
            var model = compiled[id];
            if (answer.TryGetProperty("dead", out _))
            {
                Assert.True(model is null, $"{id}: PyTorch says the cell is dead, the compiler built it");
                continue;
            }
            Assert.False(answer.TryGetProperty("error", out var error), $"{id}: PyTorch reference error {error}");
            Assert.True(model is not null, $"{id}: the compiler says the cell is dead, PyTorch built it");
            Assert.Equal((id, answer.GetProperty("params").GetInt64()), (id, model.Figures.Params));
            Assert.Equal((id, answer.GetProperty("buffers").GetInt64()), (id, model.Figures.Buffers));
            Assert.Equal((id, answer.GetProperty("macs").GetInt64()), (id, model.Figures.Macs));
            var shape = answer.GetProperty("output_shape").EnumerateArray().Select(e => e.GetInt32()).ToArray();
            Assert.Equal([1, model.OutputShape.Channels], shape);
        }
    }
}
