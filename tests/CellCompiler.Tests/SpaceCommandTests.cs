using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>`cellc space` through the real process (issue 13): the JSON report, exact and estimated, and its figures against compile's.</summary>
public sealed class SpaceCommandTests
{
    private static JsonElement Space(TempFolder temp, string json, params string[] args)
    {
        var path = temp.Write("tidepool-space.json", json);
        var result = ProcessRunner.Cellc(["space", path, "--json", .. args], null, temp.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        return JsonDocument.Parse(result.Stdout).RootElement.Clone();
    }

    [Fact]
    public void ASmallSpaceIsEnumeratedExactly()
    {
        using var temp = new TempFolder();
        var report = Space(temp, SpaceFiles.Flat4Five, "--samples", "500", "--merge", "sum");
        Assert.Equal("15625", report.GetProperty("genotypes").GetString());
        Assert.Equal(Math.Round(Math.Log10(15_625), 6), report.GetProperty("log10_genotypes").GetDouble());
        Assert.Equal("exact", report.GetProperty("method").GetString());
        Assert.Equal("sum", report.GetProperty("merge").GetString());
        var dead = report.GetProperty("dead").GetInt64();
        Assert.Equal(15_625 - dead, report.GetProperty("live").GetInt64());
        Assert.Equal((double)dead / 15_625, report.GetProperty("dead_fraction").GetDouble(), 12);
        Assert.True(report.GetProperty("distinct_networks").GetInt64() > 1_000);
        Assert.Equal(500, report.GetProperty("samples").GetInt32());
        Assert.Equal(0, report.GetProperty("inexact_hashes").GetInt32());
    }

    [Fact]
    public void ALargeSpaceIsEstimatedWithIntervals()
    {
        using var temp = new TempFolder();
        var report = Space(temp, """
            {"format":"space/1","levels":[{"nodes":4,"motifs":6,"ops":["conv1x1","dwconv3x3","sepconv3x3","maxpool3x3","identity","none"]},
                                          {"nodes":5,"ops":["*"]}]}
            """, "--samples", "300", "--seed", "4");
        Assert.Equal(System.Numerics.BigInteger.Pow(6, 46).ToString(System.Globalization.CultureInfo.InvariantCulture), report.GetProperty("genotypes").GetString());
        Assert.Equal("estimated", report.GetProperty("method").GetString());
        var networks = report.GetProperty("distinct_networks").GetDouble();
        var interval = report.GetProperty("distinct_networks_interval").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        Assert.True(interval[0] <= networks && networks <= interval[1]);
        var deadInterval = report.GetProperty("dead_fraction_interval").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        Assert.InRange(deadInterval[0], 0, report.GetProperty("dead_fraction").GetDouble());
        Assert.StartsWith("chao1", report.GetProperty("estimator").GetProperty("name").GetString());
        // 300 samples of 6^46 genotypes cover nothing: the estimate is flagged as a floor.
        Assert.True(report.GetProperty("estimator").GetProperty("lower_bound_only").GetBoolean());
        // Every sample a different network: nothing excludes that almost every live genotype is its own network.
        Assert.Equal("good-turing", report.GetProperty("estimator").GetProperty("upper_end").GetString());
        Assert.True(interval[1] > 1e35, $"upper end {interval[1]}");
        // The same seed gives the same report.
        var again = Space(temp, """
            {"format":"space/1","levels":[{"nodes":4,"motifs":6,"ops":["conv1x1","dwconv3x3","sepconv3x3","maxpool3x3","identity","none"]},
                                          {"nodes":5,"ops":["*"]}]}
            """, "--samples", "300", "--seed", "4", "-j", "1");
        Assert.Equal(networks, again.GetProperty("distinct_networks").GetDouble());
        Assert.Equal(report.GetProperty("figures").GetProperty("params").ToString(), again.GetProperty("figures").GetProperty("params").ToString());
    }

    [Fact]
    public void TheSummaryOfAnAstronomicalSpaceWritesItsBoundsWithAnExponent()
    {
        // 6^46 = 6.23e35 genotypes, 300 samples all different networks: the Good-Turing upper end is
        // about every live genotype, far past the last unit (T); the summary must still print it.
        using var temp = new TempFolder();
        var path = temp.Write("tidepool-space.json", """
            {"format":"space/1","levels":[{"nodes":4,"motifs":6,"ops":["conv1x1","dwconv3x3","sepconv3x3","maxpool3x3","identity","none"]},
                                          {"nodes":5,"ops":["*"]}]}
            """);
        var result = ProcessRunner.Cellc(["space", path, "--samples", "300", "--seed", "4"], null, temp.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        var networks = result.Stdout.Split('\n').Single(line => line.TrimStart().StartsWith("networks", StringComparison.Ordinal));
        Assert.Matches(@"to 6\.\d+e35; Chao1", networks);
        Assert.Contains("the estimate is a floor", result.Stdout);
    }

    [Fact]
    public void ASpacePastTheLargestDoubleIsBoundedNotInfinite()
    {
        // One 64-node cell over 8 ops: 8^2016 genotypes, about 10^1820, past double's 1.8e308.
        using var temp = new TempFolder();
        var report = Space(temp, """{"format":"space/1","levels":[{"nodes":64,"ops":["none","identity","conv1x1","conv3x3","dwconv3x3","sepconv3x3","maxpool3x3","avgpool3x3"]}]}""",
            "--samples", "20");
        var interval = report.GetProperty("distinct_networks_interval").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        Assert.Equal(double.MaxValue, interval[1]);
        Assert.True(double.IsFinite(report.GetProperty("distinct_networks").GetDouble()));
    }

    [Fact]
    public void FiguresAreThoseCompileReportsForTheSameCells()
    {
        // Two genotypes: a 2-node cell holding conv1x1 or conv3x3. Every live sample is one of them,
        // so the percentiles run from compile's params and MACs of the one to those of the other.
        using var temp = new TempFolder();
        var report = Space(temp, """{"format":"space/1","levels":[{"nodes":2,"ops":["conv1x1","conv3x3"]}]}""", "--samples", "200");
        var figures = report.GetProperty("figures");
        Assert.Equal(200, figures.GetProperty("measured").GetInt32());
        var small = Compile(temp, "conv1x1");
        var large = Compile(temp, "conv3x3");
        Assert.Equal(small.Params, figures.GetProperty("params").GetProperty("min").GetDouble());
        Assert.Equal(large.Params, figures.GetProperty("params").GetProperty("max").GetDouble());
        Assert.Equal(small.Macs, figures.GetProperty("macs").GetProperty("min").GetDouble());
        Assert.Equal(large.Macs, figures.GetProperty("macs").GetProperty("max").GetDouble());
        var p50 = figures.GetProperty("params").GetProperty("p50").GetDouble();
        Assert.True(p50 == small.Params || p50 == large.Params || (p50 > small.Params && p50 < large.Params));
    }

    private static (double Params, double Macs) Compile(TempFolder temp, string op)
    {
        var path = temp.Write($"{op}.json", "{\"format\":\"genotype/1\",\"levels\":[{\"nodes\":2,\"motifs\":{\"cell\":{\"edges\":[[0,1,\"" + op + "\"]]}}}]}");
        var result = ProcessRunner.Cellc(["compile", path, "--no-write", "--json"], null, temp.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        using var document = JsonDocument.Parse(result.Stdout);
        return (document.RootElement.GetProperty("params").GetInt64(), document.RootElement.GetProperty("macs").GetInt64());
    }

    [Fact]
    public void TheTextReportNamesTheMethodAndTheCounts()
    {
        using var temp = new TempFolder();
        var path = temp.Write("tidepool.json", SpaceFiles.Flat4Three);
        var result = ProcessRunner.Cellc(["space", path, "--samples", "100"], null, temp.Path);
        Assert.Equal(0, result.ExitCode);
        Assert.Contains("genotypes    729", result.Stdout, StringComparison.Ordinal);
        Assert.Contains("method       exact", result.Stdout, StringComparison.Ordinal);
        Assert.Contains("distinct under concat merges", result.Stdout, StringComparison.Ordinal);
    }
}
