using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Tests.Support;
using CellCompiler.TorchExport;

namespace CellCompiler.Tests;

/// <summary>
/// load_onnx_weights fails loudly and copies nothing when the ONNX file does not fit: a tensor
/// missing, an extra one, one of another shape (files altered with Debian's python3-onnx), with the
/// onnx package and with the file's own protobuf reader alike; and a model of another skeleton.
/// </summary>
public sealed class ExportTorchLoaderTests
{
    private static JsonElement BadWeights(string skeletonPreset, string? otherOnnxPreset = null)
    {
        using var folder = new TempFolder();
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-vocab.json"));
        var model = Compiler.Compile(genotype, SkeletonPresets.All[skeletonPreset]);
        var module = folder.File("vocab.py");
        File.WriteAllBytes(module, TorchExporter.Export(genotype, model).Bytes);
        var onnx = folder.File("vocab.onnx");
        File.WriteAllBytes(onnx, otherOnnxPreset is null ? model.OnnxBytes : Compiler.Compile(genotype, SkeletonPresets.All[otherOnnxPreset]).OnnxBytes);
        var result = PythonReference.RunJsonLines("torch_export_check.py", "--bad-weights", module, onnx, folder.Path);
        return Assert.Single(result);
    }

    [Fact]
    public void Missing_extra_and_misshaped_tensors_are_named_and_nothing_is_copied()
    {
        var report = BadWeights("proxy");
        var victim = report.GetProperty("victim").GetString()!;
        var key = NodePath.ModulePath(victim[..victim.LastIndexOf('.')]) + ".weight";
        foreach (var reader in new[] { "onnx", "builtin" })
        {
            var missing = report.GetProperty($"missing_{reader}");
            Assert.Contains($"{key}: missing", missing.GetProperty("error").GetString());
            Assert.True(missing.GetProperty("untouched").GetBoolean());

            var extra = report.GetProperty($"extra_{reader}");
            Assert.Contains("stage0/cell0/e99:ghost/conv.weight: extra", extra.GetProperty("error").GetString());
            Assert.True(extra.GetProperty("untouched").GetBoolean());

            var misshaped = report.GetProperty($"misshaped_{reader}");
            Assert.Contains($"{victim}: shape [", misshaped.GetProperty("error").GetString());
            Assert.Contains($"but {key} has shape", misshaped.GetProperty("error").GetString());
            Assert.True(misshaped.GetProperty("untouched").GetBoolean());
        }
    }

    [Fact]
    public void A_model_of_another_skeleton_does_not_load()
    {
        // full has 2 cells per stage and 64 to 256 channels: proxy's module sees extra cells and other shapes.
        var report = BadWeights("proxy", otherOnnxPreset: "full");
        foreach (var reader in new[] { "onnx", "builtin" })
        {
            var untouched = report.GetProperty($"missing_{reader}");
            var error = untouched.GetProperty("error").GetString()!;
            Assert.Contains("the weights do not fit this network", error);
            Assert.Contains("nothing was copied", error);
            Assert.Contains("stage0/cell1/", error);
            Assert.Contains("has shape", error);
            Assert.True(untouched.GetProperty("untouched").GetBoolean());
        }
    }
}
