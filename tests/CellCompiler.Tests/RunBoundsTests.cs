using System.Diagnostics;
using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Screening;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Candidates inside every input limit that would still take minutes or gigabytes (issue 10): each is
/// compiled and counted where that is cheap, and reported `over_budget` ("too large to run here")
/// with the option that bounds it, instead of running. Each case is one real `cellc check` process.
/// </summary>
public sealed class RunBoundsTests
{
    private static readonly string H3 = RepoPaths.Fixture("tidepool-h3.json");

    private static JsonElement Check(params string[] extra)
    {
        var result = ProcessRunner.Cellc(["check", H3, "--json", "--no-cache", .. extra], null, null);
        Assert.True(result.ExitCode is 0 or 1, result.Stderr);
        return JsonDocument.Parse(result.Stdout).RootElement.Clone();
    }

    private static void TooLarge(JsonElement record, string option)
    {
        Assert.Equal("over_budget", record.GetProperty("status").GetString());
        Assert.Equal(CandidateChecker.TooLargeKind, record.GetProperty("reason_kind").GetString());
        Assert.Contains(option, record.GetProperty("reason").GetString());
        Assert.NotEqual(JsonValueKind.True, record.GetProperty("smoke_tested").ValueKind); // false, or null when not even compiled
    }

    [Fact]
    public void A_network_of_trillions_of_MACs_is_counted_but_not_run()
    {
        // The case that ran for minutes: 1024x1024 input, wider stages, four cells each (4.5 T MACs per sample).
        var record = Check("--input", "3x1024x1024", "--channels", "64,128,256", "--cells", "4,4,4");
        TooLarge(record, "--max-run-macs");
        Assert.True(record.GetProperty("macs").GetInt64() > CheckOptions.DefaultMaxRunMacs);
        Assert.True(record.GetProperty("params").GetInt64() > 0);
    }

    [Fact]
    public void The_MAC_limit_is_inclusive()
    {
        var macs = Check().GetProperty("macs").GetInt64();
        Assert.Equal("ok", Check("--max-run-macs", macs.ToString()).GetProperty("status").GetString());
        TooLarge(Check("--max-run-macs", (macs - 1).ToString()), "--max-run-macs");
    }

    [Fact]
    public void A_smoke_test_past_its_time_limit_is_stopped()
    {
        // 72 G MACs per sample, three samples: no single CPU core finishes them in 1 s, so only the
        // runtime's stop flag can end the run that soon (unbounded it takes seconds to minutes).
        var clock = Stopwatch.StartNew();
        // The memory limit is set so that a small machine does not refuse it for memory first.
        var record = Check("--input", "3x1024x1024", "--max-run-seconds", "1", "--memory-limit-gb", "64");
        TooLarge(record, "--max-run-seconds");
        Assert.Contains("took longer than 1", record.GetProperty("reason").GetString());
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(60), $"took {clock.Elapsed}"); // a hang guard, not a speed target
    }

    [Fact]
    public void A_time_limit_spent_on_the_session_stops_before_any_forward_pass()
    {
        // Creating h3's session takes more than a millisecond on any machine.
        TooLarge(Check("--max-run-seconds", "0.001"), "--max-run-seconds");
        Assert.Equal("ok", Check("--max-run-seconds", "600").GetProperty("status").GetString());
    }

    [Fact]
    public void Weights_that_would_not_fit_are_counted_but_never_drawn()
    {
        // 427 M parameters: a 1.7 GB model, under a limit of 0.5 GB. The figures come from the
        // compile without weights; the weights and the ONNX bytes are never made.
        var genotype = GenotypeReader.ReadFile(H3);
        var skeleton = SkeletonPresets.All["proxy"] with { Stages = [new StageSpec(Cells: 1, Channels: 1280)] };
        var options = new CheckOptions(skeleton, CompileOptions.Default, Budgets.None);
        var checker = new CandidateChecker(options, memory: new MemoryGuard(500_000_000));
        var before = GC.GetAllocatedBytesForCurrentThread();
        var record = checker.Check(Candidate.Valid(genotype.Name, genotype));
        var allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Equal(CheckStatus.OverBudget, record.Status);
        Assert.Equal(CandidateChecker.TooLargeKind, record.ReasonKind);
        Assert.StartsWith("not compiled to ONNX", record.Reason);
        Assert.Contains("--memory-limit-gb", record.Reason);
        Assert.Equal(Compiler.CompileFigures(genotype, skeleton).Figures.Params, record.Params);
        Assert.Null(record.OnnxBytes);
        Assert.True(allocated < 200_000_000, $"allocated {allocated:N0} bytes"); // the model alone would be 1.7 GB
    }

    [Fact]
    public void Resume_compares_the_MAC_limit_but_not_the_machine_bound_time_limit()
    {
        using var folder = new TempFolder();
        var output = folder.File("r.jsonl");
        var first = ProcessRunner.Cellc(["check", H3, "--out", output, "--no-cache"], null, folder.Path);
        Assert.Equal(0, first.ExitCode);
        // A default limit is not written, so settings files made before the option existed compare as before.
        Assert.False(JsonDocument.Parse(File.ReadAllText(output + ".settings")).RootElement.TryGetProperty("max_run_macs", out _));
        var before = File.ReadAllText(output);

        var otherMacs = ProcessRunner.Cellc(["check", H3, "--out", output, "--resume", "--no-cache", "--max-run-macs", "1G"], null, folder.Path);
        Assert.Equal(2, otherMacs.ExitCode);
        Assert.Contains("max_run_macs", otherMacs.Stderr);
        Assert.Equal(before, File.ReadAllText(output));

        var otherTime = ProcessRunner.Cellc(["check", H3, "--out", output, "--resume", "--no-cache", "--max-run-seconds", "30"], null, folder.Path);
        Assert.Equal(0, otherTime.ExitCode);
        Assert.Equal(before, File.ReadAllText(output));
    }

    /// <summary>Many identity edges: a compile holds much structure for few ONNX nodes and weights.</summary>
    private static string IdentityHeavy() =>
        "{\"format\":\"genotype/1\",\"name\":\"mirrors\",\"levels\":[{\"nodes\":64,\"motifs\":{\"cell\":{\"edges\":[" +
        string.Join(",", from j in Enumerable.Range(1, 63) from i in Enumerable.Range(0, j)
                         select $"[{i},{j},\"{(i == 0 && j == 63 ? "conv1x1" : "identity")}\"]") +
        "]}}}]}";

    [Theory]
    [InlineData("0.1", "not compiled to ONNX")] // the structure fits, the weights beside it do not
    [InlineData("0.08", "not compiled: ")]      // not even the structure fits
    public void A_compile_that_does_not_fit_is_reported_alike_with_and_without_the_cache(string limitGb, string reason)
    {
        using var folder = new TempFolder();
        var genotype = folder.Write("g.json", IdentityHeavy());
        var cache = folder.File("cache.sqlite");
        string[] check = ["check", genotype, "--json", "--channels", "8,16,32"];
        var filled = ProcessRunner.Cellc([.. check, "--cache", cache], null, folder.Path);
        Assert.Equal("ok", JsonDocument.Parse(filled.Stdout).RootElement.GetProperty("status").GetString());

        var fresh = ProcessRunner.Cellc([.. check, "--no-cache", "--memory-limit-gb", limitGb], null, folder.Path);
        var cached = ProcessRunner.Cellc([.. check, "--cache", cache, "--memory-limit-gb", limitGb], null, folder.Path);
        var record = JsonDocument.Parse(fresh.Stdout).RootElement;
        TooLarge(record, "--memory-limit-gb");
        Assert.StartsWith(reason, record.GetProperty("reason").GetString());
        Assert.Equal(fresh.ExitCode, cached.ExitCode);
        Assert.Equal(Comparable(record), Comparable(JsonDocument.Parse(cached.Stdout).RootElement));
    }

    [Fact]
    public void A_network_over_the_op_limit_is_invalid_whatever_the_memory()
    {
        using var folder = new TempFolder();
        var genotype = folder.Write("g.json", HostileGenotypes.OverTheNetworkOpLimit());
        foreach (var limit in new[] { "0.001", "1000" })
        {
            var result = ProcessRunner.Cellc(["check", genotype, "--json", "--no-cache", "--memory-limit-gb", limit], null, folder.Path);
            Assert.Equal(2, result.ExitCode);
            Assert.Contains("exceeds the limit of 100,000 primitive ops", result.Stdout + result.Stderr);
        }
    }

    private static string Comparable(JsonElement record) =>
        string.Join(";", record.EnumerateObject().Where(p => p.Name is not ("check_ms" or "cached")).Select(p => $"{p.Name}={p.Value.GetRawText()}"));
}
