using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>`cellc demo` end to end in a temporary folder: every promised file, and a safe re-run.</summary>
public sealed class DemoTests
{
    [Fact]
    public void TheDemoProducesEveryFileItPromisesAndAReRunReplacesItWhole()
    {
        using var folder = new TempFolder();
        var demo = Path.Combine(folder.Path, "demo");
        var first = ProcessRunner.Cellc(["demo", "--dir", demo], null, folder.Path);
        Assert.Equal(0, first.ExitCode);

        foreach (var file in new[]
                 {
                     "genotypes/tidepool-reef.json", "genotypes/tidepool-kelp.json",
                     "models/tidepool-reef.proxy.onnx", "models/tidepool-reef.full.onnx",
                     "models/tidepool-kelp.proxy.onnx", "models/tidepool-kelp.full.onnx",
                     "pictures/tidepool-reef.svg", "pictures/tidepool-kelp.svg",
                     "population.jsonl", "results.jsonl", "report.html",
                 })
        {
            Assert.True(File.Exists(Path.Combine(demo, file)), $"missing {file}");
            Assert.Contains(file.Replace('/', Path.DirectorySeparatorChar), first.Stdout);
        }
        Assert.NotEmpty(Directory.GetFiles(Path.Combine(demo, "pictures"), "front-*.svg"));

        // 200 candidates, each exactly once, with every status accounted for in the summary.
        var records = File.ReadAllLines(Path.Combine(demo, "results.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(200, records.Count);
        Assert.Equal(200, records.Select(r => r.GetProperty("id").GetString()).Distinct().Count());
        var ok = records.Count(r => r.GetProperty("status").GetString() == "ok");
        Assert.Contains($"200 candidates: ok {ok},", first.Stdout);
        // Latency is measured for the survivors only.
        Assert.All(records.Where(r => r.GetProperty("status").GetString() == "ok"), r => Assert.True(r.GetProperty("latency_ms").GetDouble() > 0));
        Assert.All(records.Where(r => r.GetProperty("status").GetString() == "over_budget"), r => Assert.False(r.TryGetProperty("latency_ms", out _)));

        // The demo models are the same bytes `cellc compile` writes.
        var compiled = folder.File("reef.onnx");
        ProcessRunner.Cellc(["compile", Path.Combine(demo, "genotypes/tidepool-reef.json"), "--skeleton", "full", "-o", compiled], null, folder.Path);
        Assert.Equal(File.ReadAllBytes(compiled), File.ReadAllBytes(Path.Combine(demo, "models/tidepool-reef.full.onnx")));

        // A re-run replaces the folder whole: a stray file disappears, nothing is left beside it.
        File.WriteAllText(Path.Combine(demo, "stray.txt"), "left over");
        var second = ProcessRunner.Cellc(["demo", "--dir", demo], null, folder.Path);
        Assert.Equal(0, second.ExitCode);
        Assert.False(File.Exists(Path.Combine(demo, "stray.txt")));
        Assert.True(File.Exists(Path.Combine(demo, "report.html")));
        Assert.Equal(["demo", "reef.onnx"], Directory.GetFileSystemEntries(folder.Path).Select(Path.GetFileName).Order());
    }

    [Fact]
    public void AFolderNotMadeByTheDemoIsNeverReplaced()
    {
        using var folder = new TempFolder();
        var mine = Path.Combine(folder.Path, "my-work");
        Directory.CreateDirectory(mine);
        File.WriteAllText(Path.Combine(mine, "notes.txt"), "precious");
        var result = ProcessRunner.Cellc(["demo", "--dir", mine], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("was not made by `cellc demo`", result.Stderr);
        Assert.Equal("precious", File.ReadAllText(Path.Combine(mine, "notes.txt")));
        Assert.Single(Directory.GetFileSystemEntries(folder.Path));
    }
}
