using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>`cellc scale`: each target's figures equal those of `cellc compile` at that target.</summary>
public sealed class ScaleTests
{
    [Fact]
    public void FiguresAtEachTargetEqualCompileAtThatTarget()
    {
        using var folder = new TempFolder();
        var genotype = RepoPaths.Fixture("tidepool-h3.json");
        var scale = ProcessRunner.Cellc(["scale", genotype, "--to", $"proxy,full,{RepoPaths.Fixture("tidepool-skeleton.json")}",
            "--width-mult", "0.5,1", "--json", "-o", folder.Path], null, folder.Path);
        Assert.Equal(0, scale.ExitCode);
        var rows = JsonDocument.Parse(scale.Stdout).RootElement.GetProperty("rows").EnumerateArray().ToList();
        Assert.Equal(["proxy w0.5", "proxy w1", "full w0.5", "full w1", "tidepool-skeleton w0.5", "tidepool-skeleton w1"],
            rows.Select(r => r.GetProperty("target").GetString()));

        foreach (var row in rows)
        {
            // Compile the same genotype on the target's resolved skeleton, written out as a skeleton file.
            var skeleton = folder.Write($"target-{Guid.NewGuid():N}.json", row.GetProperty("skeleton").GetRawText());
            var compile = ProcessRunner.Cellc(["compile", genotype, "--skeleton", skeleton, "--json", "--no-write"], null, folder.Path);
            Assert.Equal(0, compile.ExitCode);
            var figures = JsonDocument.Parse(compile.Stdout).RootElement;
            foreach (var name in new[] { "params", "macs", "peak_activation_bytes", "onnx_bytes" })
                Assert.Equal((row.GetProperty("target").GetString(), name, figures.GetProperty(name).GetInt64()),
                    (row.GetProperty("target").GetString(), name, row.GetProperty(name).GetInt64()));
        }

        // Ratios are to the first row; the width multiplier 0.5 roughly quarters conv weights.
        Assert.Equal(1.0, rows[0].GetProperty("ratios").GetProperty("params").GetDouble());
        var ratio = rows[1].GetProperty("params").GetDouble() / rows[0].GetProperty("params").GetDouble();
        Assert.Equal(Math.Round(ratio, 4), rows[1].GetProperty("ratios").GetProperty("params").GetDouble());

        // -o DIR: one model per target, named after it, byte-identical to compile's.
        var files = Directory.GetFiles(folder.Path, "tidepool-h3.*.onnx").Select(Path.GetFileName).Order().ToList();
        Assert.Equal(["tidepool-h3.full-w0.5.onnx", "tidepool-h3.full-w1.onnx", "tidepool-h3.proxy-w0.5.onnx", "tidepool-h3.proxy-w1.onnx",
            "tidepool-h3.tidepool-skeleton-w0.5.onnx", "tidepool-h3.tidepool-skeleton-w1.onnx"], files);
        var fromCompile = folder.File("compiled.onnx");
        ProcessRunner.Cellc(["compile", genotype, "--skeleton", "full", "-o", fromCompile], null, folder.Path);
        Assert.Equal(File.ReadAllBytes(fromCompile), File.ReadAllBytes(folder.File("tidepool-h3.full-w1.onnx")));
    }

    [Fact]
    public void CellCountsGiveOneRowEachAndScaleCellWeightsLinearly()
    {
        var scale = ProcessRunner.Cellc("scale", RepoPaths.Fixture("tidepool-flat11.json"), "--to", "proxy", "--cells", "1,2,4", "--json");
        Assert.Equal(0, scale.ExitCode);
        var rows = JsonDocument.Parse(scale.Stdout).RootElement.GetProperty("rows").EnumerateArray().ToList();
        Assert.Equal(["proxy c1", "proxy c2", "proxy c4"], rows.Select(r => r.GetProperty("target").GetString()));
        var p = rows.Select(r => r.GetProperty("params").GetInt64()).ToArray();
        // Each extra cell per stage adds the same cell weights: p(4) - p(2) = 2 * (p(2) - p(1)).
        Assert.Equal(2 * (p[1] - p[0]), p[2] - p[1]);
    }

    [Fact]
    public void ABadTargetIsABadCommandLine()
    {
        var result = ProcessRunner.Cellc("scale", RepoPaths.Fixture("tidepool-h3.json"), "--to", "proxy,huge");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("huge", result.Stderr);
    }
}
