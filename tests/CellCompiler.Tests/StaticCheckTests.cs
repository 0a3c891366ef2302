using System.Text.Json;
using System.Text.Json.Nodes;
using CellCompiler.Prediction;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc check --static` through the real process: the same figures and statuses as a full check
/// without running anything on ONNX Runtime, refused with options that need a run, and recorded in
/// the settings a resume compares. Records are read with System.Text.Json's document model.
/// </summary>
public sealed class StaticCheckTests
{
    private static readonly string Population = RepoPaths.Fixture("tidepool-population.jsonl");

    private static readonly string[] Figures = ["params", "buffers", "macs", "peak_activation_bytes", "train_memory_bytes", "hash", "output_shape", "ops", "warnings"];

    private static Dictionary<string, JsonElement> Records(ProcessResult result) =>
        result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries)
            .Select(line => JsonDocument.Parse(line).RootElement.Clone())
            .ToDictionary(r => r.GetProperty("id").GetString()!);

    [Fact]
    public void StaticGivesTheFiguresAndStatusesOfAFullCheck()
    {
        var full = Records(ProcessRunner.Cellc("check", Population, "--json", "--no-cache"));
        var quick = ProcessRunner.Cellc("check", Population, "--static", "--json", "--no-cache");
        Assert.Equal(1, quick.ExitCode); // the fixture holds a dead cell and an invalid line
        var fast = Records(quick);
        Assert.Equal(full.Keys.Order(), fast.Keys.Order());
        foreach (var (id, record) in full)
        {
            Assert.Equal((id, record.GetProperty("status").GetString()), (id, fast[id].GetProperty("status").GetString()));
            if (record.GetProperty("params").ValueKind == JsonValueKind.Null) continue;
            foreach (var field in Figures)
                Assert.Equal((id, field, record.GetProperty(field).GetRawText()), (id, field, fast[id].GetProperty(field).GetRawText()));
            // No ONNX model is serialized in a static check.
            Assert.Equal(JsonValueKind.Number, record.GetProperty("onnx_bytes").ValueKind);
            Assert.Equal(JsonValueKind.Null, fast[id].GetProperty("onnx_bytes").ValueKind);
        }
    }

    [Fact]
    public void StaticRunsNothingSoTheRunLimitDoesNotApply()
    {
        // --max-run-nodes bounds what is run on ONNX Runtime: a full check reports every candidate as too large
        // to run, a static check (which runs nothing) finds it ok.
        var genotype = RepoPaths.Fixture("tidepool-h3.json");
        var run = JsonDocument.Parse(ProcessRunner.Cellc("check", genotype, "--max-run-nodes", "1", "--json", "--no-cache").Stdout).RootElement;
        Assert.Equal("over_budget", run.GetProperty("status").GetString());
        Assert.Equal("too large to run here", run.GetProperty("reason_kind").GetString());
        var quick = ProcessRunner.Cellc("check", genotype, "--static", "--max-run-nodes", "1", "--json", "--no-cache");
        Assert.Equal(0, quick.ExitCode);
        Assert.Equal("ok", JsonDocument.Parse(quick.Stdout).RootElement.GetProperty("status").GetString());
    }

    [Theory]
    [InlineData("--latency", "--latency: needs a measurement on ONNX Runtime, which --static does not make")]
    [InlineData("--max-latency-ms=5", "--max-latency-ms: needs a measurement on ONNX Runtime, which --static does not make")]
    public void StaticRefusesOptionsThatNeedARun(string option, string message)
    {
        var result = ProcessRunner.Cellc("check", RepoPaths.Fixture("tidepool-h3.json"), "--static", option, "--no-cache");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains(message, result.Stderr);
    }

    [Fact]
    public void ABudgetOnThePredictionNeedsATable()
    {
        var result = ProcessRunner.Cellc("check", RepoPaths.Fixture("tidepool-h3.json"), "--static", "--max-predicted-latency-ms", "5", "--no-cache");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("--max-predicted-latency-ms: needs --latency-table TABLE", result.Stderr);
    }

    [Fact]
    public void MeasuredAndPredictedLatencyAreBothRecorded()
    {
        using var folder = new TempFolder();
        var table = folder.File("table.json");
        LatencyTableFile.Write(table, PredictionArithmeticTests.HandTable(Input.SkeletonPresets.All["proxy"]));
        var genotype = folder.Write("counted.json", PredictionArithmeticTests.HandCounted);
        var result = ProcessRunner.Cellc("check", genotype, "--latency", "--warmup", "1", "--runs", "3", "--latency-table", table, "--json", "--no-cache");
        Assert.True(result.ExitCode == 0, result.Stderr);
        var record = JsonDocument.Parse(result.Stdout).RootElement;
        Assert.True(record.GetProperty("latency_ms").GetDouble() > 0);
        Assert.Equal(record.GetProperty("latency").GetProperty("batches")[0].GetProperty("p50_ms").GetDouble(), record.GetProperty("latency_ms").GetDouble());
        Assert.Equal(314.0625, record.GetProperty("latency_predicted_ms").GetDouble());
    }

    [Fact]
    public void ResumeComparesStaticAndTheTable()
    {
        using var folder = new TempFolder();
        var results = folder.File("results.jsonl");
        var first = ProcessRunner.Cellc("check", Population, "--static", "--out", results, "--no-cache");
        Assert.Equal(1, first.ExitCode);
        var settings = JsonNode.Parse(File.ReadAllText(results + ".settings"))!;
        Assert.True((bool)settings["static"]!);

        var again = ProcessRunner.Cellc("check", Population, "--out", results, "--resume", "--no-cache");
        Assert.Equal(2, again.ExitCode);
        Assert.Contains("static", again.Stderr);

        // A run without --static writes no `static` field, so settings files of earlier runs still compare equal.
        var plain = folder.File("plain.jsonl");
        ProcessRunner.Cellc("check", Population, "--out", plain, "--no-cache");
        Assert.Null(JsonNode.Parse(File.ReadAllText(plain + ".settings"))!["static"]);
        Assert.Null(JsonNode.Parse(File.ReadAllText(plain + ".settings"))!["latency_table"]);
    }
}
