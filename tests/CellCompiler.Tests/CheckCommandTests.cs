using System.Text.Json;
using System.Text.Json.Nodes;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc check` through the real process (issue 3; contract sections 1, 4 and 5). JSON output is
/// read line by line with System.Text.Json, independently of the tool's own writer. Latency runs
/// are tiny (--warmup 1 --runs 3) and no test asserts a wall-clock time.
/// </summary>
public sealed class CheckCommandTests
{
    private static readonly string Population = RepoPaths.Fixture("tidepool-population.jsonl");

    /// <summary>Contract section 5 fields of a check record, plus the two that issue 3 adds.</summary>
    private static readonly string[] RecordFields =
    [
        "id", "hash", "status", "reason", "output_shape", "params", "buffers", "macs", "peak_activation_bytes",
        "ops", "warnings", "onnx_bytes", "train_memory_bytes", "check_ms",
    ];

    private static readonly string[] FastLatency = ["--warmup", "1", "--runs", "3"];

    /// <summary>Each stdout line is one JSON object (JSON Lines), parsed by System.Text.Json.</summary>
    private static List<JsonElement> Records(ProcessResult result)
    {
        var lines = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        return lines.Select(line => JsonDocument.Parse(line).RootElement.Clone()).ToList();
    }

    private static string Status(JsonElement record) => record.GetProperty("status").GetString()!;

    private static string Reason(JsonElement record) => record.GetProperty("reason").GetString() ?? "";

    private static JsonElement Only(ProcessResult result)
    {
        var records = Records(result);
        Assert.Single(records);
        return records[0];
    }

    /// <summary>A population line as a stand-alone genotype file: the `id` field belongs to populations only (contract section 1).</summary>
    private static string WithoutId(string line)
    {
        var node = JsonNode.Parse(line)!.AsObject();
        node.Remove("id");
        return node.ToJsonString();
    }

    private static string PopulationLine(string id) =>
        File.ReadLines(Population).Single(l => l.Contains($"\"{id}\"", StringComparison.Ordinal));

    // --ordered: records in input order (the default is completion order with parallel workers).
    private static ProcessResult CheckJson(params string[] args) => ProcessRunner.Cellc(["check", .. args, "--json", "--ordered"], null, null);

    [Fact]
    public void Population_fixture_gives_one_record_per_candidate_with_the_right_statuses()
    {
        var result = CheckJson(Population);

        // Contract section 5: exit code 1 when the work ran but some candidate failed a check.
        Assert.Equal(1, result.ExitCode);
        var records = Records(result);
        var ids = records.Select(r => r.GetProperty("id").GetString()).ToList();
        // The fixture's own ids (contract section 1: the optional `id` field), each exactly once, in file order.
        Assert.Equal(["gen7-001", "gen7-002", "gen7-003", "gen7-004", "gen7-005", "gen7-006"], ids);

        var byId = records.ToDictionary(r => r.GetProperty("id").GetString()!);
        // Issue 3: a dead cell is `broken` with a reason naming the dead output; contract section 3 wording.
        Assert.Equal("broken", Status(byId["gen7-003"]));
        Assert.Contains("does not depend on its input", Reason(byId["gen7-003"]));
        // Issue 3: a line that does not validate is `invalid`; contract section 5: the reason names the JSON path.
        Assert.Equal("invalid", Status(byId["gen7-006"]));
        Assert.Contains("levels[0].motifs.cell.edges[0]", Reason(byId["gen7-006"]));
        Assert.Contains("conv5x5", Reason(byId["gen7-006"]));
        // Issue 3: a bad line does not stop the run; the other, valid candidates are checked and work.
        foreach (var id in new[] { "gen7-001", "gen7-002", "gen7-004", "gen7-005" })
        {
            Assert.Equal(("ok", id), (Status(byId[id]), id));
            Assert.Equal(JsonValueKind.Null, byId[id].GetProperty("reason").ValueKind);
        }
        // Contract section 4: edge order does not change the hash; gen7-004 and gen7-005 list the same edges in another order.
        Assert.Equal(byId["gen7-004"].GetProperty("hash").GetString(), byId["gen7-005"].GetProperty("hash").GetString());
    }

    [Fact]
    public void Every_record_holds_the_contract_fields()
    {
        var records = Records(CheckJson(Population));
        Assert.Equal(6, records.Count);
        foreach (var record in records)
        {
            var id = record.GetProperty("id").GetString();
            // Contract section 5 (id, hash, status, reason and the section 4 figures) plus issue 3 (train_memory_bytes, check_ms).
            foreach (var field in RecordFields)
                Assert.True(record.TryGetProperty(field, out _), $"{id}: field '{field}' missing in {record}");
            Assert.Contains(Status(record), new[] { "ok", "broken", "over_budget", "invalid" });
            Assert.True(record.GetProperty("check_ms").GetDouble() >= 0, $"{id}: check_ms");
            if (Status(record) != "ok") continue;
            Assert.Matches("^[0-9a-f]{16,}$", record.GetProperty("hash").GetString());
            // Contract section 4: output_shape is ["N", classes]; the proxy preset has 10 classes (contract section 2).
            Assert.Equal("[\"N\",10]", record.GetProperty("output_shape").GetRawText());
            foreach (var figure in new[] { "params", "buffers", "macs", "peak_activation_bytes", "onnx_bytes", "train_memory_bytes" })
                Assert.True(record.GetProperty(figure).GetInt64() > 0, $"{id}: {figure}");
        }
    }

    [Fact]
    public void Figures_of_ok_records_equal_those_of_compile()
    {
        using var folder = new TempFolder();
        var records = Records(CheckJson(Population)).Where(r => Status(r) == "ok").ToList();
        Assert.Equal(4, records.Count);
        foreach (var record in records)
        {
            var id = record.GetProperty("id").GetString()!;
            var file = folder.Write(id + ".json", WithoutId(PopulationLine(id)));
            // Outside source: `cellc compile --json` on the same genotype, whose figures the reference tests
            // check against the PyTorch rebuild (tests/reference/torch_reference.py).
            var compile = ProcessRunner.Cellc(["compile", file, "--json", "--no-write"], null, folder.Path);
            Assert.True(compile.ExitCode == 0, $"{id}: compile failed: {compile.Stderr}");
            var expected = JsonDocument.Parse(compile.Stdout).RootElement;
            foreach (var field in new[] { "hash", "output_shape", "params", "buffers", "macs", "peak_activation_bytes", "warnings", "onnx_bytes" })
                Assert.Equal((id, field, expected.GetProperty(field).GetRawText()), (id, field, record.GetProperty(field).GetRawText()));
            var expectedOps = expected.GetProperty("ops").EnumerateObject().ToDictionary(p => p.Name, p => p.Value.GetInt64());
            var actualOps = record.GetProperty("ops").EnumerateObject().ToDictionary(p => p.Name, p => p.Value.GetInt64());
            Assert.Equal(expectedOps.OrderBy(kv => kv.Key, StringComparer.Ordinal), actualOps.OrderBy(kv => kv.Key, StringComparer.Ordinal));
        }
    }

    /// <summary>gen7-001 on the proxy preset: params 76,090, MACs 11,242,112, peak activation 262,144 bytes (see `cellc compile --json`).</summary>
    private static string Gen7001(TempFolder folder) => folder.Write("gen7-001.json", WithoutId(PopulationLine("gen7-001")));

    [Theory]
    // Issue 3: each budget names the option that set it. gen7-001's figures are far over each of these limits.
    [InlineData("--max-params", new[] { "--max-params", "20k" })]
    [InlineData("--max-macs", new[] { "--max-macs", "1M" })]
    [InlineData("--max-activation-mb", new[] { "--max-activation-mb", "0.1" })]
    [InlineData("--max-train-memory-gb", new[] { "--max-train-memory-gb", "0.01", "--train-batch", "8" })]
    [InlineData("--max-latency-ms", new[] { "--max-latency-ms", "0.000001", "--warmup", "1", "--runs", "3" })]
    public void A_candidate_over_a_budget_is_over_budget_with_that_budget_named(string option, string[] args)
    {
        using var folder = new TempFolder();
        var result = CheckJson([Gen7001(folder), .. args]);
        // Contract section 5: exit 1 when a candidate fails a budget.
        Assert.Equal(1, result.ExitCode);
        var record = Only(result);
        Assert.Equal("over_budget", Status(record));
        Assert.Contains(option, Reason(record));
        // Only the budget that was set is named.
        foreach (var other in new[] { "--max-params", "--max-macs", "--max-activation-mb", "--max-train-memory-gb", "--max-latency-ms" })
            if (other != option) Assert.DoesNotContain(other, Reason(record));
        // The figures are still reported for an over-budget candidate (issue 3: it works, it only costs too much).
        Assert.Equal(76090, record.GetProperty("params").GetInt64());
        if (option == "--max-latency-ms")
            Assert.True(record.GetProperty("latency_ms").GetDouble() > 0);
        if (option == "--max-train-memory-gb")
            Assert.Contains("batch 8", Reason(record));
    }

    [Fact]
    public void A_generous_budget_passes()
    {
        using var folder = new TempFolder();
        var result = CheckJson(Gen7001(folder), "--max-params", "1e12", "--max-macs", "1G", "--max-activation-mb", "100",
            "--max-train-memory-gb", "100");
        // Contract section 5: exit 0 when all is well.
        Assert.Equal(0, result.ExitCode);
        var record = Only(result);
        Assert.Equal("ok", Status(record));
        Assert.Equal(JsonValueKind.Null, record.GetProperty("reason").ValueKind);
    }

    [Theory]
    // Issue 3: numbers accept forms like 5e6, 5M, 250k. The reason quotes the limit as parsed
    // (formatted with thousands separators), which shows the value the option was read as.
    [InlineData("--max-macs", "5e6", "--max-macs 5,000,000")]
    [InlineData("--max-macs", "5M", "--max-macs 5,000,000")]
    [InlineData("--max-macs", "250k", "--max-macs 250,000")]
    [InlineData("--max-params", "75k", "--max-params 75,000")]
    public void Number_forms_are_accepted(string option, string value, string quoted)
    {
        using var folder = new TempFolder();
        var result = CheckJson(Gen7001(folder), option, value);
        Assert.Equal(1, result.ExitCode);
        Assert.Contains(quoted, Reason(Only(result)));
    }

    [Fact]
    public void Number_forms_are_read_at_their_value()
    {
        using var folder = new TempFolder();
        // 250k = 250,000 params is above gen7-001's 76,090 (see `cellc compile --json`), 76.1k too; 76k is below.
        var file = Gen7001(folder);
        Assert.Equal("ok", Status(Only(CheckJson(file, "--max-params", "250k"))));
        Assert.Equal("ok", Status(Only(CheckJson(file, "--max-params", "76.1k"))));
        Assert.Equal("over_budget", Status(Only(CheckJson(file, "--max-params", "76k"))));
    }

    [Theory]
    [InlineData("--max-params", "5Q")]
    [InlineData("--max-macs", "five")]
    [InlineData("--max-activation-mb", "-3")]
    public void A_bad_number_is_a_bad_command_line(string option, string value)
    {
        using var folder = new TempFolder();
        var result = CheckJson(Gen7001(folder), option, value);
        // Contract section 5: a bad command line exits 2 with the message on stderr.
        Assert.Equal(2, result.ExitCode);
        Assert.Equal("", result.Stdout.Trim());
        Assert.Contains(option, result.Stderr);
        Assert.Contains(value, result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
    }

    [Fact]
    public void A_malformed_line_is_invalid_and_the_others_are_checked_and_line_ids_count_physical_lines()
    {
        using var folder = new TempFolder();
        var good = WithoutId(PopulationLine("gen7-004"));
        // Lines: 1 good, 2 blank, 3 malformed, 4 good (no ids, so the default line-N applies).
        var path = folder.Write("pop.jsonl", good + "\n\n{not json\n" + good + "\n");
        var result = CheckJson(path);
        Assert.Equal(1, result.ExitCode);
        var records = Records(result);
        // Contract section 1: default id `line-N`, N counted from 1; blank lines are skipped but still counted.
        Assert.Equal(["line-1", "line-3", "line-4"], records.Select(r => r.GetProperty("id").GetString()).ToList());
        Assert.Equal(["ok", "invalid", "ok"], records.Select(Status).ToList());
        Assert.Contains("line 3", Reason(records[1]));
        Assert.Contains("pop.jsonl", Reason(records[1]));
    }

    [Fact]
    public void Stdin_input_works()
    {
        // Contract section 5: INPUT `-` reads JSON Lines on stdin.
        var result = ProcessRunner.Cellc(["check", "-", "--json", "--ordered"], File.ReadAllText(Population), null);
        Assert.Equal(1, result.ExitCode);
        var records = Records(result);
        Assert.Equal(["gen7-001", "gen7-002", "gen7-003", "gen7-004", "gen7-005", "gen7-006"],
            records.Select(r => r.GetProperty("id").GetString()).ToList());
        Assert.Equal(["ok", "ok", "broken", "ok", "ok", "invalid"], records.Select(Status).ToList());
        Assert.Contains("levels[0].motifs.cell.edges[0]", Reason(records[5]));
    }

    [Fact]
    public void Stdin_input_of_good_candidates_exits_0()
    {
        var lines = string.Join("\n", new[] { "gen7-001", "gen7-004" }.Select(PopulationLine)) + "\n";
        var result = ProcessRunner.Cellc(["check", "-", "--json", "--ordered"], lines, null);
        Assert.Equal(0, result.ExitCode);
        Assert.Equal(["ok", "ok"], Records(result).Select(Status).ToList());
    }

    [Fact]
    public void A_bad_single_genotype_file_exits_2_naming_the_file_and_json_path()
    {
        using var folder = new TempFolder();
        var path = folder.Write("bad-edge.json", WithoutId(PopulationLine("gen7-006")));
        var result = CheckJson(path);
        // Issue 3 / contract section 5: for a single genotype file, bad input is exit 2 with file, JSON path and problem on stderr.
        Assert.Equal(2, result.ExitCode);
        Assert.Equal("", result.Stdout.Trim());
        Assert.Contains("bad-edge.json", result.Stderr);
        Assert.Contains("levels[0].motifs.cell.edges[0]", result.Stderr);
        Assert.Contains("conv5x5", result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
    }

    [Fact]
    public void A_good_single_genotype_file_exits_0_with_one_record()
    {
        var result = CheckJson(RepoPaths.Fixture("tidepool-h3.json"));
        Assert.Equal(0, result.ExitCode);
        var record = Only(result);
        Assert.Equal("ok", Status(record));
        // A genotype file's default name is the file name without extension (contract section 1); its `name` is used as id.
        Assert.Equal("tidepool-h3", record.GetProperty("id").GetString());
    }

    [Fact]
    public void The_dead_cell_fixture_is_broken()
    {
        var result = CheckJson(RepoPaths.Fixture("tidepool-deadcell.json"));
        // Contract section 5: exit 1, the work ran but the candidate failed a check.
        Assert.Equal(1, result.ExitCode);
        var record = Only(result);
        Assert.Equal("broken", Status(record));
        // Contract section 3: "an error saying that the output does not depend on the input".
        Assert.Contains("does not depend on its input", Reason(record));
        Assert.Equal(JsonValueKind.Null, record.GetProperty("params").ValueKind);
    }

    [Fact]
    public void The_table_has_one_row_per_candidate_and_the_counts()
    {
        var result = ProcessRunner.Cellc(["check", Population], null, null);
        Assert.Equal(1, result.ExitCode);
        var lines = result.Stdout.Split('\n').Select(l => l.TrimEnd('\r')).ToList();
        // Issue 3: one row per candidate, then counts by status. Statuses as in the fixture (see the JSON test).
        foreach (var (id, status) in new[] { ("gen7-001", "ok"), ("gen7-002", "ok"), ("gen7-003", "broken"), ("gen7-004", "ok"), ("gen7-005", "ok"), ("gen7-006", "invalid") })
        {
            var rows = lines.Where(l => l.StartsWith(id, StringComparison.Ordinal)).ToList();
            Assert.Single(rows);
            Assert.Contains($" {status} ", rows[0]);
        }
        Assert.Contains("6 candidates: ok 4, over_budget 0, broken 1, invalid 1", lines);
        Assert.DoesNotContain("does not transfer", result.Stdout);
    }

    [Fact]
    public void The_table_with_latency_carries_the_hardware_caution()
    {
        var result = ProcessRunner.Cellc(["check", RepoPaths.Fixture("tidepool-h3.json"), "--latency", .. FastLatency], null, null);
        Assert.Equal(0, result.ExitCode);
        // Issue 3: CPU latency measured here does not transfer to other hardware.
        Assert.Contains("does not transfer to other hardware", result.Stdout);
        Assert.Contains("1 candidate: ok 1, over_budget 0, broken 0, invalid 0", result.Stdout);
    }

    [Fact]
    public void Json_with_latency_holds_the_measurement_and_how_to_reproduce_it()
    {
        var result = CheckJson([RepoPaths.Fixture("tidepool-h3.json"), "--latency", "--batch", "1,2", .. FastLatency]);
        Assert.Equal(0, result.ExitCode);
        var record = Only(result);
        var latencyMs = record.GetProperty("latency_ms").GetDouble();
        Assert.True(latencyMs > 0);
        var latency = record.GetProperty("latency");
        // Issue 3: every latency report records the ONNX Runtime version, the processor model and the thread count.
        Assert.Equal(1, latency.GetProperty("threads").GetInt32());
        // The ONNX Runtime package version the project references (Microsoft.ML.OnnxRuntime 1.31.1).
        Assert.Equal("1.31.1", latency.GetProperty("onnxruntime").GetString());
        Assert.False(string.IsNullOrWhiteSpace(latency.GetProperty("processor").GetString()));
        var batches = latency.GetProperty("batches").EnumerateArray().ToList();
        Assert.Equal([1, 2], batches.Select(b => b.GetProperty("batch").GetInt32()).ToList());
        foreach (var b in batches)
        {
            // Order statistics: min <= median <= 90th percentile; at least --runs timed runs.
            var min = b.GetProperty("min_ms").GetDouble();
            var p50 = b.GetProperty("p50_ms").GetDouble();
            var p90 = b.GetProperty("p90_ms").GetDouble();
            Assert.True(min > 0 && min <= p50 && p50 <= p90, $"min {min}, p50 {p50}, p90 {p90}");
            Assert.True(b.GetProperty("runs").GetInt32() >= 3);
        }
        // Issue 3: latency_ms is the p50 at batch 1.
        Assert.Equal(batches[0].GetProperty("p50_ms").GetDouble(), latencyMs);
    }

    [Fact]
    public void Json_without_latency_has_no_latency_fields()
    {
        var record = Only(CheckJson(RepoPaths.Fixture("tidepool-h3.json")));
        Assert.False(record.TryGetProperty("latency_ms", out _));
        Assert.False(record.TryGetProperty("latency", out _));
    }

    [Fact]
    public void A_small_budget_is_quoted_as_given_in_the_reason()
    {
        using var folder = new TempFolder();
        // Issue 3: the reason says which budget failed and by how much "in words a user can act on".
        // gen7-001's peak activation is 262,144 bytes = 0.262 MB; the limit 0.0001 MB must not be shown as 0.
        var record = Only(CheckJson(Gen7001(folder), "--max-activation-mb", "0.0001"));
        Assert.Equal("over_budget", Status(record));
        Assert.Contains("0.0001", Reason(record));
    }
}
