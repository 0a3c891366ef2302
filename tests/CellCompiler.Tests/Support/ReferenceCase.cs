using System.Runtime.InteropServices;
using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Runtime;

namespace CellCompiler.Tests.Support;

/// <summary>One genotype + skeleton + opset to check against the outside references.</summary>
public sealed record ReferenceCase(string Id, string GenotypeJson, Skeleton Skeleton, int Opset = 17);

/// <summary>
/// Checks a batch of cases against the outside references at once, one Python process per
/// reference for the whole batch:
/// 1. the ONNX reference checker with full, strict shape inference (Debian's python3-onnx);
/// 2. every INT / FLOAT / STRING attribute read back with its value present (python3-onnx);
/// 3. ONNX Runtime on CPU: loads, and a forward pass at batch 2 gives finite logits of the inferred shape
///    (the first sample's input and logits go to the other engines);
/// 4. an independent PyTorch rebuild (Debian's python3-torch): params, buffers, MACs, output shape and
///    op counts equal the compiler's exactly; the ONNX graph's node names and op types are the ones its
///    module tree predicts; the ONNX initializers load one to one into its modules by name, and its
///    logits then equal ONNX Runtime's within <see cref="LogitTolerance"/>;
/// 5. a second engine, OpenCV's DNN module (Debian's python3-opencv): its logits for the same input
///    equal ONNX Runtime's within <see cref="LogitTolerance"/> (where OpenCV 4.6 can read the ops, see
///    <see cref="OpencvCoverage"/>).
/// Every failure of the batch is collected and reported together.
/// </summary>
public static class ReferenceBatch
{
    /// <summary>max |a - b| / max(1, max |onnxruntime|): relative to the logits' size, absolute near zero
    /// (sum-merge networks have large logits at initialisation).</summary>
    public const double LogitTolerance = 1e-4;

    private const int Batch = 2;

    /// <summary>What the checks need of one compiled case (the model's bytes are on disk, not kept in memory).</summary>
    private sealed record Compiled(ReferenceCase Case, NetworkFigures Figures, int Classes, string OnnxPath, string InputPath, string LogitsPath, long[] Shape);

    /// <summary>The cases that compiled to a model (a live cell), and those of them that also ran in OpenCV.</summary>
    public sealed record Coverage(IReadOnlyList<string> ModelIds, IReadOnlyList<string> OpencvIds, double WorstTorchError, double WorstOpencvError)
    {
        public int Models => ModelIds.Count;
        public int OpencvModels => OpencvIds.Count;

        /// <summary>One line for the test log: the README's measured differences come from these.</summary>
        public string Summary =>
            $"{Models} models, {OpencvModels} also in OpenCV; worst logit difference from ONNX Runtime " +
            $"(relative to max(1, max |logit|)): PyTorch {WorstTorchError:G2}, OpenCV {WorstOpencvError:G2}";
    }

    public static Coverage Check(IReadOnlyList<ReferenceCase> cases)
    {
        Assert.Equal(cases.Count, cases.Select(c => c.Id).Distinct().Count());
        using var folder = new TempFolder();
        var failures = new List<string>();
        var compiled = new Dictionary<string, Compiled?>();
        var torchLines = new List<string>();
        foreach (var c in cases)
        {
            Genotype genotype;
            try { genotype = GenotypeReader.Parse(c.GenotypeJson, c.Id, c.Id); }
            catch (InputException e) { throw new Xunit.Sdk.XunitException($"{c.Id}: the compiler refused the genotype: {e.Message}"); }
            CompiledModel? model = null;
            try { model = Compiler.Compile(genotype, c.Skeleton, new CompileOptions(Seed: 3, Opset: c.Opset)); }
            catch (DeadCellException) { }
            var line = new Dictionary<string, object>
            {
                ["id"] = c.Id,
                ["genotype"] = JsonSerializer.Deserialize<JsonElement>(c.GenotypeJson),
                ["skeleton"] = JsonSerializer.Deserialize<JsonElement>(c.Skeleton.ToJson()),
                ["opset"] = c.Opset,
            };
            if (model is null)
            {
                compiled[c.Id] = null;
                torchLines.Add(JsonSerializer.Serialize(line));
                continue;
            }
            var entry = RunOnnxRuntime(c, model, folder, failures);
            compiled[c.Id] = entry;
            line["onnx"] = entry.OnnxPath;
            line["input"] = entry.InputPath;
            line["shape"] = entry.Shape;
            line["logits"] = entry.LogitsPath;
            torchLines.Add(JsonSerializer.Serialize(line));
        }
        var models = compiled.Values.OfType<Compiled>().ToList();
        var paths = models.Select(m => m.OnnxPath).ToArray();

        // The Python references run side by side: each reads the files written above and nothing else.
        var checker = Task.Run(() => paths.Length == 0 ? [] : PythonReference.RunJsonLines("onnx_check.py", paths));
        var attributes = Task.Run(() => paths.Length == 0 ? [] : PythonReference.RunJsonLines("attribute_values.py", paths));
        var torchFile = folder.Write("torch.jsonl", string.Join("\n", torchLines) + "\n");
        var torch = Task.Run(() => PythonReference.RunJsonLines("torch_reference.py", torchFile));
        var opencvCases = models.Where(m => OpencvCoverage.Unsupported(m.Case.GenotypeJson) is null).ToList();
        var opencvFile = folder.Write("opencv.jsonl", string.Join("\n", opencvCases.Select(m => JsonSerializer.Serialize(new
        {
            id = m.Case.Id, onnx = m.OnnxPath, input = m.InputPath, shape = m.Shape, logits = m.LogitsPath,
        }))) + "\n");
        var opencvRun = Task.Run(() => opencvCases.Count == 0 ? [] : PythonReference.RunJsonLines("opencv_forward.py", opencvFile));
        Task.WaitAll(checker, attributes, torch, opencvRun);

        CheckChecker(checker.Result, paths.Length, failures);
        CheckAttributes(attributes.Result, paths.Length, failures);
        var worstTorch = CheckTorch(torch.Result, cases.Count, compiled, failures);
        var worstOpencv = CheckOpencv(opencvRun.Result, opencvCases, failures);
        Assert.True(failures.Count == 0,
            $"{failures.Count} reference check(s) failed over {cases.Count} cases:\n" + string.Join("\n", failures.Take(40)));
        return new Coverage(models.Select(m => m.Case.Id).ToList(), opencvCases.Select(m => m.Case.Id).ToList(), worstTorch, worstOpencv);
    }

    /// <summary>
    /// Writes the model, a seeded input and ONNX Runtime's logits for it (raw little-endian float32).
    /// ONNX Runtime runs at batch 2 (the batch dimension is symbolic: both samples must come out); the
    /// other engines get the first sample only, which halves their CPU time and compares the same thing.
    /// </summary>
    private static Compiled RunOnnxRuntime(ReferenceCase c, CompiledModel model, TempFolder folder, List<string> failures)
    {
        var onnxPath = folder.File(c.Id + ".onnx");
        File.WriteAllBytes(onnxPath, model.OnnxBytes);
        var input = model.InputShape;
        long[] shape = [Batch, input.Channels, input.Height, input.Width];
        var values = ForwardPass.RandomInput(shape, 11);
        using var pass = new ForwardPass(model.OnnxBytes);
        var result = pass.Run(values, shape);
        var classes = model.OutputShape.Channels;
        if (!result.Shape.SequenceEqual([Batch, (long)classes]))
            failures.Add($"{c.Id}: ONNX Runtime output shape [{string.Join(", ", result.Shape)}]");
        if (!result.AllFinite)
            failures.Add($"{c.Id}: ONNX Runtime gave non-finite logits");

        var inputPath = folder.File(c.Id + ".input.bin");
        File.WriteAllBytes(inputPath, MemoryMarshal.AsBytes(values.AsSpan(0, values.Length / Batch)).ToArray());
        var logitsPath = folder.File(c.Id + ".ort.bin");
        File.WriteAllBytes(logitsPath, MemoryMarshal.AsBytes(result.Values.AsSpan(0, classes)).ToArray());
        return new Compiled(c, model.Figures, classes, onnxPath, inputPath, logitsPath, [1, input.Channels, input.Height, input.Width]);
    }

    private static void CheckChecker(IReadOnlyList<JsonElement> verdicts, int expected, List<string> failures)
    {
        Assert.Equal(expected, verdicts.Count);
        failures.AddRange(verdicts.Where(v => !v.GetProperty("ok").GetBoolean()).Select(v => "ONNX checker: " + v));
    }

    private static void CheckAttributes(IReadOnlyList<JsonElement> reports, int expected, List<string> failures)
    {
        Assert.Equal(expected, reports.Count);
        foreach (var report in reports)
        {
            var path = Path.GetFileName(report.GetProperty("path").GetString());
            if (report.TryGetProperty("error", out var error))
                failures.Add($"{path}: the ONNX library cannot read it: {error}");
            else if (report.GetProperty("attributes").GetInt32() == 0)
                failures.Add($"{path}: no attribute read at all");
            else if (report.GetProperty("missing").GetArrayLength() > 0)
                failures.Add($"{path}: attributes without their value: {report.GetProperty("missing")}");
        }
    }

    /// <returns>The largest relative logit difference seen.</returns>
    private static double CheckTorch(IReadOnlyList<JsonElement> answers, int expected, Dictionary<string, Compiled?> compiled, List<string> failures)
    {
        Assert.Equal(expected, answers.Count);
        var worst = 0.0;
        foreach (var answer in answers)
        {
            var id = answer.GetProperty("id").GetString()!;
            var entry = compiled[id];
            if (answer.TryGetProperty("dead", out _))
            {
                if (entry is not null) failures.Add($"{id}: PyTorch says the cell is dead, the compiler built it");
                continue;
            }
            if (answer.TryGetProperty("error", out var error))
            {
                failures.Add($"{id}: PyTorch reference error {error}");
                continue;
            }
            if (entry is null)
            {
                failures.Add($"{id}: the compiler says the cell is dead, PyTorch built it");
                continue;
            }
            var figures = entry.Figures;
            void Same(string what, long reference, long ours)
            {
                if (reference != ours) failures.Add($"{id}: {what} PyTorch {reference:N0}, compiler {ours:N0}");
            }
            Same("params", answer.GetProperty("params").GetInt64(), figures.Params);
            Same("buffers", answer.GetProperty("buffers").GetInt64(), figures.Buffers);
            Same("macs", answer.GetProperty("macs").GetInt64(), figures.Macs);
            var shape = answer.GetProperty("output_shape").EnumerateArray().Select(e => e.GetInt64()).ToArray();
            if (!shape.SequenceEqual([entry.Shape[0], (long)entry.Classes]))
                failures.Add($"{id}: PyTorch output shape [{string.Join(", ", shape)}]");
            var referenceOps = OpCountText(answer.GetProperty("ops").EnumerateObject().Select(p => (p.Name, p.Value.GetInt32())));
            var ourOps = OpCountText(figures.OpCounts.Select(p => (p.Key, p.Value)));
            if (referenceOps != ourOps) failures.Add($"{id}: op counts PyTorch {referenceOps}, compiler {ourOps}");
            if (answer.TryGetProperty("node_mismatch", out var mismatch))
                failures.Add($"{id}: ONNX node names differ from the PyTorch module tree: {mismatch}");
            if (answer.TryGetProperty("load_error", out var load))
                failures.Add($"{id}: ONNX initializers do not load into the PyTorch modules: {load}");
            else
            {
                var e = answer.GetProperty("logit_error").GetDouble();
                worst = Math.Max(worst, e);
                if (e > LogitTolerance) failures.Add($"{id}: PyTorch logits differ from ONNX Runtime's by {e:G3} (relative)");
            }
        }
        return worst;
    }

    /// <returns>The largest relative logit difference seen.</returns>
    private static double CheckOpencv(IReadOnlyList<JsonElement> answers, List<Compiled> cases, List<string> failures)
    {
        Assert.Equal(cases.Count, answers.Count);
        var worst = 0.0;
        foreach (var (answer, entry) in answers.Zip(cases))
        {
            var id = answer.GetProperty("id").GetString()!;
            Assert.Equal(entry.Case.Id, id);
            if (answer.TryGetProperty("error", out var error))
                failures.Add($"{id}: OpenCV DNN cannot run it: {error}");
            else
            {
                var e = answer.GetProperty("logit_error").GetDouble();
                worst = Math.Max(worst, e);
                if (e > LogitTolerance) failures.Add($"{id}: OpenCV logits differ from ONNX Runtime's by {e:G3} (relative)");
            }
        }
        return worst;
    }

    private static string OpCountText(IEnumerable<(string Op, int Count)> counts) =>
        string.Join(", ", counts.OrderBy(c => c.Op, StringComparer.Ordinal).Select(c => $"{c.Op}: {c.Count}"));
}
