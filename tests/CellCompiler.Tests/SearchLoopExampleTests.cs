using System.Text.Json;
using System.Text.Json.Nodes;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// examples/search_loop.py, the README's search loop, run as a user would against the built cellc:
/// it streams each generation into `cellc check - --json` and must get every id back exactly once.
/// The first generation (about 650 KB) is larger than the pipes and cellc's read-ahead hold: measured
/// on this machine, a loop that writes the whole population and then reads hangs on it (no progress
/// in 60 s), while the example screens it in about 6 s; so a loop without a writer thread fails here
/// by the time limit instead of passing.
/// </summary>
public sealed class SearchLoopExampleTests
{
    private const int Population = 150;
    private const int Keep = 3;

    [Fact]
    public void The_search_loop_example_gets_every_id_back_exactly_once_and_exports_the_survivors()
    {
        using var folder = new TempFolder();
        var sampled = ProcessRunner.Cellc(["sample", "--levels", "3,3", "--motifs", "2,1", "--count", $"{Population}", "--seed", "9"], null, folder.Path);
        Assert.True(sampled.ExitCode == 0, sampled.Stderr);
        // 4 KB of search bookkeeping per line (meta is carried, never read): about 600 KB into cellc's stdin.
        var lines = sampled.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(line =>
        {
            var genotype = JsonNode.Parse(line)!.AsObject();
            genotype["meta"] = new JsonObject { ["note"] = new string('~', 4000) };
            return genotype.ToJsonString();
        }).ToList();
        Assert.Equal(Population, lines.Count);
        var population = folder.Write("population.jsonl", string.Join("\n", lines) + "\n");
        Assert.True(new FileInfo(population).Length > 500_000);

        var records = folder.File("records.jsonl");
        var exported = folder.File("survivors");
        var cellc = $"dotnet \"{RepoPaths.CliDll}\"";
        var result = ProcessRunner.Run(PythonReference.Python,
        [
            Path.Combine(RepoPaths.Root, "examples", "search_loop.py"), population, "--generations", "2", "--keep", $"{Keep}",
            "--jobs", "2", "--records", records, "--export", exported, "--cellc", cellc,
        ], timeout: TimeSpan.FromMinutes(4));
        Assert.True(result.ExitCode == 0, $"exit {result.ExitCode}\n{result.Stderr}");

        var ids = File.ReadLines(records).Select(l => JsonDocument.Parse(l).RootElement.GetProperty("id").GetString()!).ToList();
        var generation0 = lines.Select(l => JsonNode.Parse(l)!["id"]!.GetValue<string>()).ToList();
        var generation1 = Enumerable.Range(0, Population).Select(n => $"g1-{n}").ToList();
        // Every id of both generations exactly once (records come in completion order).
        Assert.Equal(generation0.Concat(generation1).Order(StringComparer.Ordinal), ids.Order(StringComparer.Ordinal));

        var summaries = result.Stdout.Split('\n').Where(l => l.StartsWith('{')).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal([0, 1], summaries.Select(s => s.GetProperty("generation").GetInt32()));
        Assert.All(summaries, s => Assert.Equal(Population, s.GetProperty("screened").GetInt32()));
        var survivors = summaries[1].GetProperty("survivors").EnumerateArray().Select(e => e.GetString()!).ToList();
        Assert.Equal(Keep, survivors.Count);
        foreach (var survivor in survivors)
        {
            var module = Path.Combine(exported, survivor.Replace('-', '_') + ".py");
            Assert.True(File.Exists(module), module);
            var compiled = ProcessRunner.Run(PythonReference.Python, ["-m", "py_compile", module]);
            Assert.True(compiled.ExitCode == 0, compiled.Stderr);
        }
    }

    [Fact]
    public void The_readme_shows_the_examples_screen_function_word_for_word()
    {
        var readme = File.ReadAllText(Path.Combine(RepoPaths.Root, "README.md"));
        var section = readme[readme.IndexOf("### Driving `cellc check` from Python", StringComparison.Ordinal)..];
        var start = section.IndexOf("```python\n", StringComparison.Ordinal) + "```python\n".Length;
        var block = section[start..section.IndexOf("```", start, StringComparison.Ordinal)];
        Assert.StartsWith("def screen(", block);
        var example = File.ReadAllText(Path.Combine(RepoPaths.Root, "examples", "search_loop.py"));
        Assert.Contains(block, example);
    }
}
