using System.Text.Json;
using System.Text.Json.Nodes;
using CellCompiler.Prediction;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The Native AOT program (issue 10, fast start) does the main job for real: the folder
/// scripts/publish-native.sh makes (artifacts/native/cellc) compiles, checks on ONNX Runtime with
/// the SQLite cache, predicts from a latency table, reports, inspects and refuses bad input exactly
/// as the ordinary JIT build does. Everything the tests do not exercise in the native program could
/// have been trimmed away or fail only there (reflection, runtime marshalling), so each command's
/// output is compared with the JIT build's on the same input; the models also pass the ONNX
/// reference checker.
/// </summary>
public sealed class NativeBinaryTests
{
    private static readonly string Folder = Path.Combine(RepoPaths.Root, "artifacts", "native", "cellc");
    private static string Population => RepoPaths.Fixture("tidepool-population.jsonl");

    private static string Executable
    {
        get
        {
            var path = Path.Combine(Folder, "cellc");
            Assert.True(File.Exists(path),
                $"the native cellc is missing at {path}: run scripts/publish-native.sh first (scripts/test.sh does)");
            return path;
        }
    }

    private static ProcessResult Native(params string[] args) =>
        ProcessRunner.Run(Executable, args, timeout: TimeSpan.FromMinutes(2));

    [Fact]
    public void The_folder_is_a_native_program_with_its_native_libraries_and_no_managed_code()
    {
        var executable = Executable;
        // ELF header (System V ABI, from memory): 0x7F 'E' 'L' 'F', then class 2 = 64-bit; e_machine 62 = x86-64 at offset 18.
        var header = File.ReadAllBytes(executable).AsSpan(0, 20).ToArray();
        Assert.Equal(new byte[] { 0x7F, (byte)'E', (byte)'L', (byte)'F', 2 }, header[..5]);
        Assert.Equal(62, BitConverter.ToUInt16(header, 18));
        // Nothing for a .NET runtime to load: no assemblies and no runtime configuration beside the program.
        Assert.Equal(
            ["cellc", "libe_sqlite3.so", "libonnxruntime.so", "libonnxruntime_providers_shared.so"],
            Directory.GetFiles(Folder).Select(Path.GetFileName).Order(StringComparer.Ordinal));

        var version = Native("--version");
        Assert.Equal(0, version.ExitCode);
        Assert.Equal(ProcessRunner.Cellc("--version").Stdout, version.Stdout);
    }

    [Fact]
    public void Compile_writes_the_same_model_as_the_JIT_build_and_it_passes_the_onnx_checker()
    {
        using var folder = new TempFolder();
        foreach (var fixture in new[] { "tidepool-h3.json", "tidepool-bottleneck.json" })
        {
            var native = Native("compile", RepoPaths.Fixture(fixture), "-o", folder.File("native-" + fixture + ".onnx"));
            Assert.True(native.ExitCode == 0, native.Stderr);
            // The model records the commit it was built from: a program published from an earlier commit is stale, not wrong.
            var built = JsonNode.Parse(ProcessRunner.Cellc("inspect", folder.File("native-" + fixture + ".onnx"), "--json").Stdout)!;
            var commit = (string?)built["metadata_props"]?["cellc_commit"];
            Assert.True(commit == BuildInfo.Commit,
                $"the native cellc was built from commit {commit}, these tests from {BuildInfo.Commit}: run scripts/publish-native.sh again");
            var jit = ProcessRunner.Cellc("compile", RepoPaths.Fixture(fixture), "-o", folder.File("jit-" + fixture + ".onnx"));
            Assert.Equal(0, jit.ExitCode);
            Assert.Equal(File.ReadAllBytes(folder.File("jit-" + fixture + ".onnx")), File.ReadAllBytes(folder.File("native-" + fixture + ".onnx")));
            Assert.Equal(jit.Stdout.Replace("jit-", "X-"), native.Stdout.Replace("native-", "X-"));
        }
        // Outside reference: the ONNX reference checker with full shape inference (Debian python3-onnx).
        var verdicts = PythonReference.RunJsonLines("onnx_check.py",
            folder.File("native-tidepool-h3.json.onnx"), folder.File("native-tidepool-bottleneck.json.onnx"));
        Assert.Equal(2, verdicts.Count);
        Assert.All(verdicts, v => Assert.True(v.GetProperty("ok").GetBoolean(), v.ToString()));
    }

    [Fact]
    public void Check_runs_candidates_on_onnx_runtime_and_answers_the_second_run_from_the_sqlite_cache()
    {
        using var folder = new TempFolder();
        var cache = folder.File("cache.db");
        var first = Native("check", Population, "--out", folder.File("first.jsonl"), "--cache", cache, "--ordered");
        // The population holds a dead cell and an unknown op, so not every candidate is ok: exit 1.
        Assert.True(first.ExitCode == 1, first.Stderr);
        var records = Records(folder.File("first.jsonl"));
        Assert.Equal(["gen7-001", "gen7-002", "gen7-003", "gen7-004", "gen7-005", "gen7-006"], records.Select(r => (string)r["id"]!));
        Assert.Equal(["ok", "ok", "broken", "ok", "ok", "invalid"], records.Select(r => (string)r["status"]!));
        // Every ok candidate went through the ONNX Runtime smoke run, and none came from the cache but gen7-005: it is
        // gen7-004's network with its edges listed in another order (one hash), so when gen7-004 finishes first in
        // this very run, gen7-005 is rightly answered from the cache (the two workers decide which comes first).
        Assert.All(records.Where(r => (string)r["status"]! == "ok"), r => Assert.True((bool)r["smoke_tested"]!));
        Assert.Equal((string)records[3]["hash"]!, (string)records[4]["hash"]!);
        Assert.All(records.Where(r => (string)r["id"]! != "gen7-005"), r => Assert.False((bool)r["cached"]!));

        var jit = ProcessRunner.Cellc("check", Population, "--out", folder.File("jit.jsonl"), "--no-cache", "--ordered");
        Assert.Equal(1, jit.ExitCode);
        Assert.Equal(Comparable(Records(folder.File("jit.jsonl"))), Comparable(records));

        var second = Native("check", Population, "--out", folder.File("second.jsonl"), "--cache", cache, "--ordered");
        Assert.Equal(1, second.ExitCode);
        var again = Records(folder.File("second.jsonl"));
        // The four ok candidates are answered from the cache; the dead cell and the invalid line are found again.
        Assert.Equal([true, true, false, true, true, false], again.Select(r => (bool)r["cached"]!));
        Assert.Equal(Comparable(records), Comparable(again));
    }

    [Fact]
    public void A_static_check_predicts_latency_from_a_table_as_the_JIT_build_does()
    {
        using var folder = new TempFolder();
        var table = folder.File("table.json");
        LatencyTableFile.Write(table, PredictionArithmeticTests.HandTable(Input.SkeletonPresets.All["proxy"]));
        var genotype = folder.Write("counted.json", PredictionArithmeticTests.HandCounted);
        var native = Native("check", genotype, "--static", "--latency-table", table, "--json", "--no-cache");
        Assert.True(native.ExitCode == 0, native.Stderr);
        var record = JsonNode.Parse(native.Stdout)!;
        // The hand sum of the table's units (PredictionArithmeticTests.ProxyPredictionIsTheHandSum).
        Assert.Equal(314.0625, (double)record["latency_predicted_ms"]!);
        Assert.False((bool)record["smoke_tested"]!); // --static: nothing ran on ONNX Runtime
        var jit = ProcessRunner.Cellc("check", genotype, "--static", "--latency-table", table, "--json", "--no-cache");
        Assert.Equal(Comparable([JsonNode.Parse(jit.Stdout)!.AsObject()]), Comparable([record.AsObject()]));
    }

    [Fact]
    public void Report_writes_the_same_page_and_charts_as_the_JIT_build()
    {
        using var folder = new TempFolder();
        var results = folder.File("results.jsonl");
        Assert.Equal(1, ProcessRunner.Cellc("check", Population, "--out", results, "--no-cache", "--ordered").ExitCode);
        var native = Native("report", results, "--genotypes", Population, "-o", folder.File("native.html"), "--title", "tidepool");
        Assert.True(native.ExitCode == 0, native.Stderr);
        var jit = ProcessRunner.Cellc("report", results, "--genotypes", Population, "-o", folder.File("jit.html"), "--title", "tidepool");
        Assert.Equal(0, jit.ExitCode);
        var page = File.ReadAllText(folder.File("native.html"));
        // The charts (OxyPlot, whose one trim warning the native build leaves a warning) are in the page.
        Assert.Contains("<svg", page);
        Assert.Equal(File.ReadAllText(folder.File("jit.html")), page);
    }

    [Fact]
    public void Inspect_describes_a_model_as_the_JIT_build_does()
    {
        using var folder = new TempFolder();
        var model = folder.File("h3.onnx");
        Assert.Equal(0, ProcessRunner.Cellc("compile", RepoPaths.Fixture("tidepool-h3.json"), "-o", model).ExitCode);
        foreach (var json in new[] { false, true })
        {
            string[] args = json ? ["inspect", model, "--json"] : ["inspect", model];
            var native = Native(args);
            Assert.True(native.ExitCode == 0, native.Stderr);
            Assert.Equal(ProcessRunner.Cellc(args).Stdout, native.Stdout);
        }
        // h3 at proxy size: the parameter count `compile` prints for it (the README's compile example).
        Assert.Contains("params        483,882", Native("inspect", model).Stdout);
    }

    [Fact]
    public void Bad_input_is_exit_2_with_the_file_and_the_json_path_and_no_stack_trace()
    {
        using var folder = new TempFolder();
        var bad = folder.Write("bad.json", """{"format": "genotype/1", "levels": [{"nodes": "four"}]}""");
        var cases = new[]
        {
            (new[] { "compile", bad, "-o", folder.File("bad.onnx") }, new[] { "bad.json", "levels[0].nodes" }),
            (new[] { "compile", RepoPaths.Fixture("tidepool-h3.json"), "--opset", "abc" }, new[] { "--opset", "abc" }),
            (new[] { "inspect", bad }, new[] { "bad.json" }),
            (new[] { "check", folder.File("missing.jsonl") }, new[] { "missing.jsonl" }),
        };
        foreach (var (args, mentions) in cases)
        {
            var native = Native(args);
            Assert.True(native.ExitCode == 2, $"{string.Join(' ', args)}: exit {native.ExitCode}\n{native.Stderr}");
            foreach (var mention in mentions) Assert.Contains(mention, native.Stderr);
            Assert.DoesNotContain("   at ", native.Stderr);
            Assert.Equal(ProcessRunner.Cellc(args).Stderr, native.Stderr);
        }
        Assert.False(File.Exists(folder.File("bad.onnx")));
    }

    private static List<JsonObject> Records(string path) =>
        File.ReadLines(path).Select(line => JsonNode.Parse(line)!.AsObject()).ToList();

    /// <summary>A record without what differs between any two runs: the time it took and whether the cache answered.</summary>
    private static List<string> Comparable(IEnumerable<JsonObject> records) =>
        records.Select(r =>
        {
            var copy = r.DeepClone().AsObject();
            copy.Remove("check_ms");
            copy.Remove("cached");
            return copy.ToJsonString();
        }).ToList();
}
