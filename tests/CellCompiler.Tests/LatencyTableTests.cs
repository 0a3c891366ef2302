using System.Text.Json;
using System.Text.Json.Nodes;
using CellCompiler.Input;
using CellCompiler.Prediction;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Latency tables: the file format read back, predictions through the real process, refusal of a
/// table made under other conditions, damaged and truncated files (exit 2 with a clear message and
/// nothing written), and parallel processes that add units to one table. Files are read here with
/// System.Text.Json's document model, independently of the tool's own reader.
/// </summary>
public sealed class LatencyTableTests
{
    private static readonly Skeleton Proxy = SkeletonPresets.All["proxy"];

    private static string WriteHandTable(TempFolder folder, Skeleton? skeleton = null, TableConditions? conditions = null)
    {
        var path = folder.File("table.json");
        LatencyTableFile.Write(path, PredictionArithmeticTests.HandTable(skeleton ?? Proxy, conditions));
        return path;
    }

    private static string WriteGenotype(TempFolder folder) => folder.Write("counted.json", PredictionArithmeticTests.HandCounted);

    private static JsonElement OnlyRecord(ProcessResult result)
    {
        var lines = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.True(lines.Length == 1, $"expected one record, got: {result.Stdout}\n{result.Stderr}");
        return JsonDocument.Parse(lines[0]).RootElement.Clone();
    }

    [Fact]
    public void TableRoundTripsAndIsWrittenInItsOwnFormat()
    {
        using var folder = new TempFolder();
        var path = WriteHandTable(folder);
        var table = LatencyTableFile.Read(path);
        Assert.Equal(PredictionArithmeticTests.HandTable(Proxy).Units.Keys, table.Units.Keys);
        Assert.Equal(TableConditions.Here(1, 17), table.Conditions);

        var json = JsonNode.Parse(File.ReadAllText(path))!;
        Assert.Equal("latency-table/1", (string?)json["format"]);
        // Processor as /proc/cpuinfo names it (read here independently of MachineInfo).
        var cpu = File.ReadLines("/proc/cpuinfo").First(l => l.StartsWith("model name", StringComparison.Ordinal)).Split(':', 2)[1].Trim();
        Assert.Equal(cpu, (string?)json["conditions"]!["processor"]);
        Assert.Equal(1, (int)json["conditions"]!["threads"]!);
        Assert.Equal(1, (int)json["conditions"]!["batch"]!);
        var units = json["units"]!.AsArray();
        Assert.Contains(units, u => (string?)u!["unit"] == "stem conv3x3/s1 3x32x32->16" && (double)u["ms"]! == 1);
        Assert.Contains(units, u => (string?)u!["unit"] == "reduce sepconv3x3 32x16x16->64" && (double)u["ms"]! == 4);
        Assert.Contains(units, u => (string?)u!["unit"] == "head 64x8x8->10" && (double)u["ms"]! == 8);
        Assert.Contains(units, u => (string?)u!["unit"] == "primitive sepconv(kernel=3,dilation=1,repeat=1,act=relu) @32x16x16" && (double)u["ms"]! == 8);
        Assert.Contains(units, u => (string?)u!["unit"] == "merge concat/3 @64x8x8" && (double)u["ms"]! == 0.0625);
    }

    [Fact]
    public void CheckRecordsCarryThePredictionOfTheTable()
    {
        using var folder = new TempFolder();
        var table = WriteHandTable(folder);
        var result = ProcessRunner.Cellc("check", WriteGenotype(folder), "--static", "--latency-table", table, "--json", "--no-cache");
        Assert.True(result.ExitCode == 0, result.Stderr);
        var record = OnlyRecord(result);
        Assert.Equal("ok", record.GetProperty("status").GetString());
        Assert.Equal(314.0625, record.GetProperty("latency_predicted_ms").GetDouble());
        Assert.False(record.TryGetProperty("latency_ms", out _));
    }

    [Fact]
    public void ABudgetOnThePredictionIsJudged()
    {
        using var folder = new TempFolder();
        var table = WriteHandTable(folder);
        var result = ProcessRunner.Cellc("check", WriteGenotype(folder), "--static", "--latency-table", table,
            "--max-predicted-latency-ms", "300", "--json", "--no-cache");
        Assert.Equal(1, result.ExitCode);
        var record = OnlyRecord(result);
        Assert.Equal("over_budget", record.GetProperty("status").GetString());
        // 14.0625 / 300 = 4.6875%, shown to three significant digits.
        Assert.Equal("predicted latency at batch 1 314 ms exceeds --max-predicted-latency-ms 300 ms by 4.69%", record.GetProperty("reason").GetString());
        Assert.Equal("over --max-predicted-latency-ms", record.GetProperty("reason_kind").GetString());
    }

    [Fact]
    public void ACandidateOverThePredictedBudgetIsNotRunUnlessAsked()
    {
        // Outside --static a check runs every candidate on ONNX Runtime; the prediction (314 ms from
        // the hand-built table) comes before the run, so a candidate over the budget is spared it,
        // as with every budget that needs no run, and --run-over-budget still runs it.
        using var folder = new TempFolder();
        var table = WriteHandTable(folder);
        var genotype = WriteGenotype(folder);
        var spared = OnlyRecord(ProcessRunner.Cellc("check", genotype, "--latency-table", table,
            "--max-predicted-latency-ms", "300", "--json", "--no-cache"));
        Assert.Equal("over_budget", spared.GetProperty("status").GetString());
        Assert.False(spared.GetProperty("smoke_tested").GetBoolean());
        Assert.EndsWith("not run on ONNX Runtime (already over budget)", spared.GetProperty("reason").GetString());
        Assert.Equal(314.0625, spared.GetProperty("latency_predicted_ms").GetDouble());

        var run = OnlyRecord(ProcessRunner.Cellc("check", genotype, "--latency-table", table,
            "--max-predicted-latency-ms", "300", "--run-over-budget", "--json", "--no-cache"));
        Assert.Equal("over_budget", run.GetProperty("status").GetString());
        Assert.True(run.GetProperty("smoke_tested").GetBoolean());

        var within = OnlyRecord(ProcessRunner.Cellc("check", genotype, "--latency-table", table,
            "--max-predicted-latency-ms", "320", "--json", "--no-cache"));
        Assert.Equal("ok", within.GetProperty("status").GetString());
        Assert.True(within.GetProperty("smoke_tested").GetBoolean());
    }

    public static TheoryData<string, string, string> Mismatches => new()
    {
        { "processor", "Imaginary Tidepool CPU 9000", "conditions.processor" },
        { "onnxruntime", "0.0.1", "conditions.onnxruntime" },
        { "threads", "4", "conditions.threads" },
        { "session", "graph optimizations off", "conditions.session" },
        { "opset", "13", "conditions.opset" },
    };

    [Theory]
    [MemberData(nameof(Mismatches))]
    public void ATableMadeUnderOtherConditionsIsRefused(string field, string value, string jsonPath)
    {
        using var folder = new TempFolder();
        var path = WriteHandTable(folder);
        var json = JsonNode.Parse(File.ReadAllText(path))!;
        json["conditions"]![field] = field is "threads" or "opset" ? JsonValue.Create(int.Parse(value)) : JsonValue.Create(value);
        File.WriteAllText(path, json.ToJsonString());
        var results = folder.File("results.jsonl");

        var check = ProcessRunner.Cellc("check", WriteGenotype(folder), "--static", "--latency-table", path, "--out", results, "--no-cache");
        Assert.Equal(2, check.ExitCode);
        Assert.Contains($"{path}: {jsonPath}: it was calibrated with", check.Stderr);
        Assert.Contains(value, check.Stderr);
        Assert.Contains("holds only under the conditions", check.Stderr);
        Assert.DoesNotContain("   at ", check.Stderr); // no stack trace
        Assert.False(File.Exists(results), "nothing is written when the table is refused");

        var bench = ProcessRunner.Cellc("bench", WriteGenotype(folder), "--latency-table", path, "--warmup", "1", "--runs", "3");
        Assert.Equal(2, bench.ExitCode);
        Assert.Contains(jsonPath, bench.Stderr);
    }

    public static TheoryData<string, string> DamagedFiles => new()
    {
        { "truncated", "cut short (truncated)" },
        { "garbled", "not valid JSON at line" },
        { "empty", "the file is empty" },
        { "unknown field", "unknown field" },
        { "negative time", "units[0].ms: must be a finite time of at least 0 ms" },
        { "unknown unit", "units[0].unit: 'widget 3x3' is not a unit" },
        { "repeated unit", "is listed twice" },
        { "other format", "format: must be \"latency-table/1\"" },
        { "null unit", "units[1]: must be an object" },
        { "falling fit", "fit.slope: must be a finite number above 0" },
        { "anchor of 0 ms", "ms: the anchor's time must be above 0 ms" },
    };

    [Theory]
    [MemberData(nameof(DamagedFiles))]
    public void ADamagedTableIsBadInputNeverACrash(string damage, string message)
    {
        using var folder = new TempFolder();
        var path = WriteHandTable(folder);
        var text = File.ReadAllText(path);
        var json = JsonNode.Parse(text)!;
        var units = json["units"]!.AsArray();
        switch (damage)
        {
            case "truncated": text = text[..(text.Length / 2)]; break;
            case "garbled": text = text[..(text.Length / 2)] + "}{\u0001" + text[(text.Length / 2 + 3)..]; break;
            case "empty": text = ""; break;
            case "unknown field": json["conditions"]!["cores"] = 2; text = json.ToJsonString(); break;
            case "negative time": units[0]!["ms"] = -0.5; text = json.ToJsonString(); break;
            case "unknown unit": units[0]!["unit"] = "widget 3x3"; text = json.ToJsonString(); break;
            case "repeated unit": units.Add(units[0]!.DeepClone()); text = json.ToJsonString(); break;
            case "other format": json["format"] = "latency-table/0"; text = json.ToJsonString(); break;
            case "null unit": units.Insert(1, null); text = json.ToJsonString(); break;
            case "anchor of 0 ms":
                units.Add(JsonNode.Parse("""{"unit": "anchor conv3x3/4 @32x16x16", "ms": 0, "how": "by hand", "measured": "2026-12-02T00:00:00+00:00", "load": null}"""));
                text = json.ToJsonString();
                break;
            case "falling fit":
                json["fit"] = JsonNode.Parse("""{"intercept_ms": 0.1, "slope": -1, "networks": 12, "mean_absolute_error_percent": 4, "how": "by hand", "measured": "2026-12-02T00:00:00+00:00", "load": null, "skeleton": "{}"}""");
                text = json.ToJsonString();
                break;
            default: throw new ArgumentException(damage);
        }
        File.WriteAllText(path, text);
        var results = folder.File("results.jsonl");

        var result = ProcessRunner.Cellc("check", WriteGenotype(folder), "--static", "--latency-table", path, "--out", results, "--no-cache");
        Assert.Equal(2, result.ExitCode);
        Assert.StartsWith($"cellc: error: {path}: ", result.Stderr);
        Assert.Contains(message, result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
        Assert.DoesNotContain("internal error", result.Stderr);
        Assert.False(File.Exists(results));
    }

    [Fact]
    public void AMissingTableFileIsBadInput()
    {
        using var folder = new TempFolder();
        var result = ProcessRunner.Cellc("check", WriteGenotype(folder), "--static", "--latency-table", folder.File("none.json"), "--no-cache");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("no such latency table", result.Stderr);
        Assert.Contains("cellc calibrate", result.Stderr);
    }

    [Fact]
    public void ConcurrentUpdatesInOneProcessLoseNothing()
    {
        using var folder = new TempFolder();
        var path = WriteHandTable(folder);
        var before = LatencyTableFile.Read(path).Count;
        Parallel.For(0, 16, i => LatencyTableFile.Update(path, current =>
            current!.With([new($"primitive extra{i} @1x1x1", new UnitTime(i, "test", DateTimeOffset.UnixEpoch, null))], replace: false)));
        var units = JsonNode.Parse(File.ReadAllText(path))!["units"]!.AsArray().Select(u => (string)u!["unit"]!).ToList();
        Assert.Equal(before + 16, units.Count);
        Assert.Equal(16, units.Count(u => u.StartsWith("primitive extra", StringComparison.Ordinal)));
    }

    /// <summary>
    /// Three processes, each meeting a declared primitive the table lacks, measure it on first use and
    /// add it to the one table at the same time: afterwards the table holds all three, every earlier
    /// entry unchanged, and no temporary file is left.
    /// </summary>
    [Fact]
    public async Task ParallelProcessesShareOneTable()
    {
        using var folder = new TempFolder();
        // A small skeleton keeps the measurements short.
        var skeleton = SkeletonReader.Resolve(folder.Write("small.json", CalibrationTests.SmallSkeleton));
        var path = WriteHandTable(folder, skeleton);
        var before = LatencyTableFile.Read(path);
        var kinds = new[] { "{\"kind\": \"conv\", \"kernel\": 5}", "{\"kind\": \"sepconv\", \"kernel\": 5}", "{\"kind\": \"maxpool\", \"kernel\": 5}" };
        var genotypes = kinds.Select((kind, i) => folder.Write($"g{i}.json",
            "{\"format\": \"genotype/1\", \"primitives\": {\"own" + i + "\": " + kind + "}, " +
            "\"levels\": [{\"nodes\": 2, \"motifs\": {\"cell\": {\"edges\": [[0, 1, \"own" + i + "\"]]}}}]}")).ToList();
        var runs = await Task.WhenAll(genotypes.Select(g => Task.Run(() => ProcessRunner.Cellc("check", g, "--static", "--latency-table", path,
            "--skeleton", folder.File("small.json"), "--json", "--no-cache"))));
        foreach (var run in runs)
            Assert.True(run.ExitCode == 0, run.Stderr);

        var after = LatencyTableFile.Read(path);
        // The three units and the anchor, which a table from before anchors gets with its first units measured on first use.
        Assert.Equal(before.Count + 4, after.Count);
        Assert.Contains(AnchorUnit.Instance.Key, after.Units.Keys);
        foreach (var key in new[] { "primitive conv(kernel=5,dilation=1,act=relu) @8x8x8", "primitive sepconv(kernel=5,dilation=1,repeat=1,act=relu) @8x8x8", "primitive maxpool(kernel=5) @8x8x8" })
            Assert.Contains(key, after.Units.Keys);
        foreach (var (key, time) in before.Units)
            Assert.Equal(time.Ms, after.Units[key].Ms);
        Assert.Empty(Directory.EnumerateFiles(folder.Path, "*.tmp", SearchOption.AllDirectories));
        // Each record's prediction used the value now in the table: the frame (stem 1 + head 8 + run 16, no reductions) + its one unit.
        foreach (var (run, key) in runs.Zip(new[] { "primitive conv(kernel=5,dilation=1,act=relu) @8x8x8", "primitive sepconv(kernel=5,dilation=1,repeat=1,act=relu) @8x8x8", "primitive maxpool(kernel=5) @8x8x8" }))
            Assert.Equal(Math.Round(25 + after.Units[key].Ms, 4), OnlyRecord(run).GetProperty("latency_predicted_ms").GetDouble(), 6);
    }

    [Fact]
    public void ConditionsNameThisMachineAndTheBenchSession()
    {
        var here = TableConditions.Here(2, 17);
        Assert.Equal(MachineInfo.Processor, here.Processor);
        Assert.Equal(MachineInfo.RuntimeVersion, here.OnnxRuntime);
        Assert.Equal(LatencyMeter.DescribeSession(2), here.Session);
        Assert.Contains("spinning on", here.Session);
        Assert.Contains("spinning off", TableConditions.Here(1, 17).Session);
    }
}
