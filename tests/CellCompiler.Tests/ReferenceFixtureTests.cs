using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Tests.Support;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>Every fixture genotype on the proxy and full224 presets and on the fixture skeleton, against the outside references.</summary>
public sealed class ReferenceFixtureTests(ITestOutputHelper output)
{
    /// <summary>Every genotype/1 file of fixtures/ (the skeleton and the population are not genotypes).</summary>
    public static IReadOnlyList<string> GenotypeFixtures()
    {
        var files = Directory.GetFiles(Path.Combine(RepoPaths.Root, "fixtures"), "*.json")
            .Where(f => File.ReadAllText(f).Contains("\"genotype/1\"", StringComparison.Ordinal))
            .OrderBy(f => f, StringComparer.Ordinal)
            .ToList();
        Assert.True(files.Count >= 4, "fixture genotypes not found");
        return files;
    }

    [Fact]
    public void FixturesMatchOnnxCheckerRuntimePyTorchAndOpencv()
    {
        var proxy = SkeletonPresets.All["proxy"];
        var skeletons = new List<(string Label, Skeleton Skeleton, int Opset)>
        {
            ("proxy", proxy, 17),
            // The full preset is left to the generated tests: fixtures at full224 already cover wide networks.
            ("full224", SkeletonPresets.All["full224"], 17),
            ("skeleton-file", SkeletonReader.Resolve(RepoPaths.Fixture("tidepool-skeleton.json")), 13),
            // Both merge modes and both opsets on the proxy preset, and the other reduction.
            ("proxy-sum13", proxy with { Merge = MergeMode.Sum }, 13),
            ("proxy-sum17", proxy with { Merge = MergeMode.Sum }, 17),
            ("proxy-concat13", proxy, 13),
            ("proxy-conv3x3", proxy with { Reduction = "conv3x3" }, 17),
        };
        var cases = (from file in GenotypeFixtures()
                     from s in skeletons
                     select new ReferenceCase($"{Path.GetFileNameWithoutExtension(file)}-{s.Label}",
                         File.ReadAllText(file), s.Skeleton, s.Opset)).ToList();
        var coverage = ReferenceBatch.Check(cases);
        output.WriteLine(coverage.Summary);
        // OpenCV loads every fixture model whose ops OpenCV 4.6 reads at all (OpencvCoverage).
        var beyondOpencv = cases.Where(c => OpencvCoverage.Unsupported(c.GenotypeJson) is not null).Select(c => c.Id).ToHashSet();
        Assert.Equal(coverage.ModelIds.Where(id => !beyondOpencv.Contains(id)), coverage.OpencvIds);
        Assert.True(coverage.Models >= cases.Count * 3 / 4, $"{coverage.Models} of {cases.Count} fixture cases are live");
    }

    [Fact]
    public void PopulationLinesMatchReferences()
    {
        var lines = File.ReadAllLines(RepoPaths.Fixture("tidepool-population.jsonl"))
            .Where(l => l.Trim().Length > 0 && !l.Contains("conv5x5")) // gen7-006 is deliberately invalid
            .Select((l, i) => new ReferenceCase($"population-{i}",
                System.Text.RegularExpressions.Regex.Replace(l, "\"id\":\\s*\"[^\"]*\",\\s*", ""), SkeletonPresets.All["proxy"]))
            .ToList();
        Assert.Equal(5, lines.Count);
        ReferenceBatch.Check(lines);
    }

    /// <summary>
    /// The figures `cellc compile --json` prints (through the real CLI process) equal the PyTorch
    /// rebuild's: params, buffers, MACs, output shape and the op-type counts, for every fixture
    /// under concat at opset 17 and under sum at opset 13; a dead cell is exit 1 and dead in PyTorch too.
    /// </summary>
    [Fact]
    public void CompileJsonFiguresEqualPyTorch()
    {
        using var folder = new TempFolder();
        var runs = new List<(string Id, string[] Args, string Genotype, string Skeleton, int Opset)>();
        foreach (var file in GenotypeFixtures())
        {
            var name = Path.GetFileNameWithoutExtension(file);
            var genotype = File.ReadAllText(file);
            var proxy = SkeletonPresets.All["proxy"];
            runs.Add(($"{name}-concat17", ["compile", file, "--skeleton", "proxy", "--json", "-o", folder.File(name + "-a.onnx")],
                genotype, proxy.ToJson(), 17));
            runs.Add(($"{name}-sum13", ["compile", file, "--skeleton", "proxy", "--merge", "sum", "--opset", "13", "--json", "-o", folder.File(name + "-b.onnx")],
                genotype, (proxy with { Merge = MergeMode.Sum }).ToJson(), 13));
        }
        var lines = runs.Select(r => $"{{\"id\":\"{r.Id}\",\"genotype\":{JsonSerializer.Serialize(JsonDocument.Parse(r.Genotype).RootElement)},\"skeleton\":{r.Skeleton},\"opset\":{r.Opset}}}");
        var answers = PythonReference.RunJsonLines("torch_reference.py", folder.Write("batch.jsonl", string.Join("\n", lines) + "\n"));
        Assert.Equal(runs.Count, answers.Count);
        var live = 0;
        foreach (var (run, answer) in runs.Zip(answers))
        {
            var result = ProcessRunner.Cellc(run.Args);
            if (answer.TryGetProperty("dead", out _))
            {
                Assert.True(result.ExitCode == 1, $"{run.Id}: PyTorch says dead, cellc exit {result.ExitCode}: {result.Stderr}");
                continue;
            }
            Assert.True(result.ExitCode == 0, $"{run.Id}: exit {result.ExitCode}: {result.Stderr}");
            live++;
            using var json = JsonDocument.Parse(result.Stdout);
            var ours = json.RootElement;
            foreach (var figure in new[] { "params", "buffers", "macs" })
                Assert.True(answer.GetProperty(figure).GetInt64() == ours.GetProperty(figure).GetInt64(),
                    $"{run.Id}: {figure} PyTorch {answer.GetProperty(figure)}, cellc {ours.GetProperty(figure)}");
            Assert.Equal(["N", "10"], ours.GetProperty("output_shape").EnumerateArray().Select(e => e.ToString()));
            Assert.Equal([1, 10], answer.GetProperty("output_shape").EnumerateArray().Select(e => e.GetInt32()));
            Assert.Equal(
                answer.GetProperty("ops").EnumerateObject().Select(p => $"{p.Name}={p.Value}").Order(StringComparer.Ordinal),
                ours.GetProperty("ops").EnumerateObject().Select(p => $"{p.Name}={p.Value}").Order(StringComparer.Ordinal));
        }
        Assert.True(live >= runs.Count - 2, $"{live} live runs");
    }
}
