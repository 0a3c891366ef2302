using System.Text.Json;
using CellCompiler.Figures;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>Hostile or odd input handled as the rules ask: exit 2 or an invalid record, never a crash.</summary>
public sealed class RobustnessTests
{
    private const string Flat = """{"format":"genotype/1","levels":[{"nodes":2,"motifs":{"c":{"edges":[[0,1,"conv1x1"]]}}}]}""";

    [Fact]
    public void ALoneSurrogateInAStringIsBadInputWithItsPath()
    {
        using var folder = new TempFolder();
        var path = folder.Write("s.json", Flat.Replace("\"levels\"", "\"name\":\"x\\ud800y\",\"levels\""));
        var result = ProcessRunner.Cellc(["compile", path, "--no-write"], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains($"{path}: name: the string is not valid Unicode text", result.Stderr);
    }

    [Fact]
    public void ABadLineInAPopulationNeverStopsTheRun()
    {
        var population = string.Join("\n",
            Flat.Replace("{\"format\"", "{\"id\":\"a\",\"format\""),
            Flat.Replace("{\"format\"", "{\"id\":\"\\udc00\",\"format\""),
            Flat.Replace("{\"format\"", "{\"id\":\"c\",\"format\"")) + "\n";
        var result = ProcessRunner.Cellc(["check", "-", "--json", "--ordered"], population, null);
        Assert.Equal(1, result.ExitCode);
        var records = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(["a", "line-2", "c"], records.Select(r => r.GetProperty("id").GetString()));
        Assert.Equal(["ok", "invalid", "ok"], records.Select(r => r.GetProperty("status").GetString()));
    }

    [Fact]
    public void ACandidateOverAStaticBudgetIsNotRun()
    {
        using var folder = new TempFolder();
        var path = folder.Write("g.json", Flat);
        var result = ProcessRunner.Cellc(["check", path, "--json", "--input", "3x2048x2048", "--max-activation-mb", "100"], null, folder.Path);
        Assert.Equal(1, result.ExitCode);
        var record = JsonDocument.Parse(result.Stdout).RootElement;
        Assert.Equal("over_budget", record.GetProperty("status").GetString());
        Assert.Contains("--max-activation-mb", record.GetProperty("reason").GetString());
        Assert.Contains("not run on ONNX Runtime", record.GetProperty("reason").GetString());
    }

    [Fact]
    public void APopulationIsRecognisedByItsContentWhateverItsExtension()
    {
        using var folder = new TempFolder();
        var path = folder.Write("pop.txt", Flat + "\n" + Flat + "\n");
        var result = ProcessRunner.Cellc(["check", path, "--json"], null, folder.Path);
        Assert.Equal(0, result.ExitCode);
        Assert.Equal(2, result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).Length);
        Assert.Contains("\"id\":\"line-2\"", result.Stdout);
    }

    [Fact]
    public void ASingleGenotypeThatCannotFormANetworkExits2AsForCompile()
    {
        var json = HostileGenotypes.OverTheNetworkOpLimit();
        using var folder = new TempFolder();
        var path = folder.Write("big.json", json);
        var result = ProcessRunner.Cellc(["check", path], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("exceeds the limit of 100,000 primitive ops", result.Stdout + result.Stderr);
    }

    [Fact]
    public void TrainingMemorySaturatesInsteadOfOverflowing()
    {
        Assert.Equal(long.MaxValue, TrainingMemory.EstimateBytes(long.MaxValue / 2, 1, 0, 1_000_000));
        // 2 * 100 + 4 * 10 * 4 + 3 * 4 = 372, by the documented formula.
        Assert.Equal(372, TrainingMemory.EstimateBytes(100, 10, 3, 2));
    }
}
