using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// A small CNN exported by PyTorch (Debian's python3-torch, torch.onnx.export) through
/// tests/reference/export_torch_model.py: a model this tool did not make. Exported once per test class.
/// </summary>
public sealed class TorchExportedModel : IDisposable
{
    private readonly TempFolder _folder = new();

    public string Path { get; }

    /// <summary>What the export script reports about the model it wrote (PyTorch's side of the facts).</summary>
    public JsonElement Facts { get; }

    public TorchExportedModel()
    {
        Assert.True(File.Exists(PythonReference.Python), $"{PythonReference.Python} is missing; scripts/test.sh installs python3-torch");
        Path = _folder.File("torch-cnn.onnx");
        var result = ProcessRunner.Run(PythonReference.Python, [RepoPaths.ReferenceScript("export_torch_model.py"), Path],
            timeout: TimeSpan.FromMinutes(5));
        Assert.True(result.ExitCode == 0,
            $"export_torch_model.py failed with exit code {result.ExitCode} (3 means python3-torch is not installed):\n{result.Stderr}");
        Assert.True(File.Exists(Path), "export_torch_model.py wrote no model");
        Facts = JsonDocument.Parse(result.Stdout.Trim().Split('\n')[^1]).RootElement.Clone();
    }

    public void Dispose() => _folder.Dispose();
}

/// <summary>
/// `cellc bench` through the real process (issue 3). Runs are tiny (--warmup 1 --runs 3); no test
/// asserts a wall-clock time, only that the figures are there and consistent.
/// </summary>
public sealed class BenchCommandTests(TorchExportedModel torch) : IClassFixture<TorchExportedModel>
{
    private static readonly string[] FastLatency = ["--warmup", "1", "--runs", "3"];

    private static JsonElement Json(ProcessResult result)
    {
        Assert.True(result.ExitCode == 0, $"cellc bench failed with exit code {result.ExitCode}:\n{result.Stderr}");
        return JsonDocument.Parse(result.Stdout).RootElement.Clone();
    }

    private static List<long> Shape(JsonElement array) => array.EnumerateArray().Select(d => d.GetInt64()).ToList();

    private static void AssertPercentsAddUpTo100(JsonElement breakdown)
    {
        var parts = breakdown.GetProperty("parts").EnumerateArray().ToList();
        Assert.NotEmpty(parts);
        foreach (var part in parts)
            Assert.InRange(part.GetProperty("percent").GetDouble(), 0, 100);
        // Issue 3: the shares add up to about 100%.
        var sum = parts.Sum(p => p.GetProperty("percent").GetDouble());
        Assert.InRange(sum, 99, 101);
    }

    [Fact]
    public void The_export_script_describes_the_model_it_wrote()
    {
        // PyTorch's side: nn.Linear(8, 5) gives 5 outputs, input "x" [B, 3, 16, 16] with a dynamic batch axis.
        Assert.Equal(["B", "5"], torch.Facts.GetProperty("output").EnumerateArray().Select(d => d.ToString()).ToList());
        Assert.Equal(["B", "3", "16", "16"], torch.Facts.GetProperty("input").EnumerateArray().Select(d => d.ToString()).ToList());
        Assert.InRange(torch.Facts.GetProperty("opset").GetInt32(), 13, 17);
    }

    [Fact]
    public void Bench_of_a_pytorch_model_reports_latency_and_output_shape_per_batch()
    {
        var json = Json(ProcessRunner.Cellc(["bench", torch.Path, "--batch", "1,4", .. FastLatency, "--json"], null, null));
        var latency = json.GetProperty("latency");
        // Issue 3: the report records thread count, ONNX Runtime version and processor.
        Assert.Equal(1, latency.GetProperty("threads").GetInt32());
        Assert.Equal("1.31.1", latency.GetProperty("onnxruntime").GetString());
        Assert.False(string.IsNullOrWhiteSpace(latency.GetProperty("processor").GetString()));
        var batches = latency.GetProperty("batches").EnumerateArray().ToList();
        Assert.Equal([1, 4], batches.Select(b => b.GetProperty("batch").GetInt32()).ToList());
        foreach (var b in batches)
        {
            var min = b.GetProperty("min_ms").GetDouble();
            var p50 = b.GetProperty("p50_ms").GetDouble();
            var p90 = b.GetProperty("p90_ms").GetDouble();
            // Order statistics of the timed runs: 0 < min <= p50 <= p90.
            Assert.True(min > 0 && min <= p50 && p50 <= p90, $"batch {b.GetProperty("batch")}: min {min}, p50 {p50}, p90 {p90}");
            Assert.True(b.GetProperty("runs").GetInt32() >= 3);
            Assert.True(b.GetProperty("samples_per_second").GetDouble() > 0);
        }
        // PyTorch's model: [B, 5] with B set from --batch (issue 3: symbolic dimensions are set from --batch).
        var shapes = json.GetProperty("output_shapes").EnumerateArray().Select(Shape).ToList();
        Assert.Equal([[1, 5], [4, 5]], shapes);
    }

    [Fact]
    public void Breakdown_of_a_pytorch_model_is_by_op_type_and_adds_up_to_100()
    {
        var json = Json(ProcessRunner.Cellc(["bench", torch.Path, "--breakdown", .. FastLatency, "--json"], null, null));
        var breakdown = json.GetProperty("breakdown");
        // Issue 3 / LatencyBreakdown: a model not made by this tool has no hierarchical names, so parts are op types.
        Assert.Equal("op_type", breakdown.GetProperty("by").GetString());
        AssertPercentsAddUpTo100(breakdown);
        var names = breakdown.GetProperty("parts").EnumerateArray().Select(p => p.GetProperty("name").GetString()).ToList();
        // The PyTorch model has a Conv2d; ONNX Runtime runs it as a Conv kernel (possibly fused, still named Conv or FusedConv).
        Assert.Contains(names, n => n!.Contains("Conv", StringComparison.Ordinal));
        Assert.Empty(breakdown.GetProperty("top_motifs").EnumerateArray());
    }

    [Fact]
    public void Breakdown_of_a_genotype_is_by_part_and_adds_up_to_100()
    {
        var json = Json(ProcessRunner.Cellc(["bench", RepoPaths.Fixture("tidepool-h3.json"), "--breakdown", .. FastLatency, "--json"], null, null));
        var breakdown = json.GetProperty("breakdown");
        Assert.Equal("part", breakdown.GetProperty("by").GetString());
        AssertPercentsAddUpTo100(breakdown);
        var names = breakdown.GetProperty("parts").EnumerateArray().Select(p => p.GetProperty("name").GetString()).ToList();
        // Contract section 2, proxy preset: stem, 3 stages of 1 cell, a reduction between stages, head.
        foreach (var part in new[] { "stem", "stage0/cell0", "reduce0", "stage1/cell0", "reduce1", "stage2/cell0", "head" })
            Assert.Contains(part, names);
        // The fixture's motifs (fixtures/tidepool-h3.json levels 0 and 1); top motifs are named among them.
        var motifs = breakdown.GetProperty("top_motifs").EnumerateArray().Select(p => p.GetProperty("name").GetString()!).ToList();
        Assert.NotEmpty(motifs);
        var declared = Motifs(RepoPaths.Fixture("tidepool-h3.json"));
        Assert.All(motifs, m => Assert.Contains(m, declared));
        Assert.Equal("[[1,10]]", json.GetProperty("output_shapes").GetRawText());
    }

    /// <summary>Motif names below the cell level of a genotype file, read with System.Text.Json.</summary>
    private static HashSet<string> Motifs(string genotypePath)
    {
        using var document = JsonDocument.Parse(File.ReadAllText(genotypePath));
        var levels = document.RootElement.GetProperty("levels").EnumerateArray().ToList();
        return levels.Take(levels.Count - 1)
            .SelectMany(l => l.GetProperty("motifs").EnumerateObject().Select(m => m.Name))
            .ToHashSet();
    }

    [Fact]
    public void Text_output_carries_the_hardware_caution_and_the_table()
    {
        var result = ProcessRunner.Cellc(["bench", torch.Path, "--batch", "1,4", .. FastLatency], null, null);
        Assert.Equal(0, result.ExitCode);
        // Issue 3: the caution that CPU latency measured here does not transfer to other hardware.
        Assert.Contains("does not transfer to other hardware", result.Stdout);
        Assert.Contains("ONNX Runtime 1.31.1", result.Stdout);
        Assert.Contains("[1, 5]", result.Stdout);
        Assert.Contains("[4, 5]", result.Stdout);
    }

    [Fact]
    public void A_fixed_batch_model_is_never_reported_at_a_batch_it_did_not_run()
    {
        using var folder = new TempFolder();
        var path = folder.File("torch-cnn-static.onnx");
        // PyTorch export without a dynamic axis: input [1, 3, 16, 16], output [1, 5] (export_torch_model.py --static).
        var export = ProcessRunner.Run(PythonReference.Python, [RepoPaths.ReferenceScript("export_torch_model.py"), path, "--static"],
            timeout: TimeSpan.FromMinutes(5));
        Assert.True(export.ExitCode == 0, export.Stderr);
        var result = ProcessRunner.Cellc(["bench", path, "--batch", "1,4", .. FastLatency, "--json"], null, null);
        // Issue 3: only symbolic dimensions are set from --batch; other sizes are taken from the model. So batch 4
        // cannot run on this model: either the command refuses it (exit 2), or every row it reports really ran at
        // its batch size (the output's first dimension equals the batch), so that samples/s is true.
        if (result.ExitCode == 2) return;
        var json = Json(result);
        var batches = json.GetProperty("latency").GetProperty("batches").EnumerateArray().Select(b => b.GetProperty("batch").GetInt64()).ToList();
        var shapes = json.GetProperty("output_shapes").EnumerateArray().Select(Shape).ToList();
        Assert.Equal(batches.Count, shapes.Count);
        for (var i = 0; i < batches.Count; i++)
            Assert.True(shapes[i][0] == batches[i], $"reported as batch {batches[i]} but the output is [{string.Join(", ", shapes[i])}]");
    }

    [Fact]
    public void A_missing_model_is_bad_input()
    {
        using var folder = new TempFolder();
        var missing = folder.File("no-such-model.onnx");
        var result = ProcessRunner.Cellc(["bench", missing, .. FastLatency], null, null);
        // Contract section 5: exit 2, message on stderr naming the file.
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("no-such-model.onnx", result.Stderr);
        Assert.Contains("not found", result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
    }

    [Theory]
    [InlineData("random")]
    [InlineData("text")]
    [InlineData("empty")]
    public void A_garbage_model_is_bad_input_with_a_clear_message(string kind)
    {
        using var folder = new TempFolder();
        var path = folder.File($"garbage-{kind}.onnx");
        var bytes = kind switch
        {
            "random" => RandomBytes(300),
            "text" => "this is not an ONNX model\n"u8.ToArray(),
            _ => [],
        };
        File.WriteAllBytes(path, bytes);
        var result = ProcessRunner.Cellc(["bench", path, .. FastLatency, "--json"], null, null);
        // Contract section 5: exit 2, the file named on stderr, one line, no stack trace.
        Assert.Equal(2, result.ExitCode);
        Assert.Equal("", result.Stdout.Trim());
        Assert.Contains($"garbage-{kind}.onnx", result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
        Assert.DoesNotContain("Exception", result.Stderr);
        Assert.Single(result.Stderr.Split('\n', StringSplitOptions.RemoveEmptyEntries));
    }

    private static byte[] RandomBytes(int count)
    {
        var bytes = new byte[count];
        new Random(11).NextBytes(bytes);
        return bytes;
    }
}
