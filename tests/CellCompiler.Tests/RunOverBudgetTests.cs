using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// A candidate over a budget that needs no run is, by default, compiled and counted but not run, and
/// its record says so; `--run-over-budget` runs it, so "works, but exceeds a budget" is then true.
/// </summary>
public sealed class RunOverBudgetTests
{
    private static JsonElement CheckOne(string file, params string[] extra)
    {
        var result = ProcessRunner.Cellc(["check", file, "--json", "--no-cache", "--max-params", "1k", .. extra], null, null);
        Assert.Equal(1, result.ExitCode);
        return JsonDocument.Parse(result.Stdout.Trim()).RootElement;
    }

    [Fact]
    public void Over_budget_candidates_are_not_run_unless_asked()
    {
        var file = RepoPaths.Fixture("tidepool-flat11.json");

        var quiet = CheckOne(file);
        Assert.Equal("over_budget", quiet.GetProperty("status").GetString());
        Assert.False(quiet.GetProperty("smoke_tested").GetBoolean());
        Assert.Contains("not run on ONNX Runtime", quiet.GetProperty("reason").GetString());

        var run = CheckOne(file, "--run-over-budget");
        Assert.Equal("over_budget", run.GetProperty("status").GetString());
        Assert.True(run.GetProperty("smoke_tested").GetBoolean());
        Assert.DoesNotContain("not run", run.GetProperty("reason").GetString());
        Assert.Contains("--max-params", run.GetProperty("reason").GetString());
    }

    [Fact]
    public void A_cached_unrun_evaluation_is_run_when_asked_later()
    {
        using var folder = new TempFolder();
        var file = RepoPaths.Fixture("tidepool-flat11.json");
        var cache = folder.File("cache.db");
        var first = ProcessRunner.Cellc(["check", file, "--json", "--cache", cache, "--max-params", "1k"], null, null);
        Assert.False(JsonDocument.Parse(first.Stdout.Trim()).RootElement.GetProperty("smoke_tested").GetBoolean());
        var second = ProcessRunner.Cellc(["check", file, "--json", "--cache", cache, "--max-params", "1k", "--run-over-budget"], null, null);
        var record = JsonDocument.Parse(second.Stdout.Trim()).RootElement;
        Assert.True(record.GetProperty("smoke_tested").GetBoolean());
        Assert.False(record.GetProperty("cached").GetBoolean());
    }
}
