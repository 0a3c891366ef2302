using System.Text.Json.Nodes;
using CellCompiler.Prediction;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc calibrate` through the real process on a small skeleton (one stage of 8 channels at 8x8, so
/// that it takes seconds): every unit the skeleton can contain is in the table, progress is shown,
/// and a table is never extended under other conditions. No time is asserted.
/// </summary>
public sealed class CalibrationTests
{
    /// <summary>One stage of one cell with 8 channels at 8x8 (a list of one value would apply to every stage of a preset).</summary>
    public const string SmallSkeleton = """
        {"format": "skeleton/1", "input": {"channels": 3, "height": 8, "width": 8}, "classes": 10, "stages": [{"cells": 1, "channels": 8}]}
        """;

    private static string[] Small(TempFolder folder) => ["--skeleton", folder.Write("small.json", SmallSkeleton)];

    private static string Declarations(TempFolder folder) =>
        folder.Write("primitives.json", """{"wide5": {"kind": "sepconv", "kernel": 5}, "bneck3": {"kind": "mbconv", "kernel": 3, "expand": 2, "se": 0.25, "act": "silu"}}""");

    /// <summary>Written out by hand from contract sections 2, 3 and 3.1: the frame, the six built-ins, two declarations, merges of 2 and 3.</summary>
    private static readonly string[] ExpectedUnits =
    [
        "anchor conv3x3/4 @32x16x16",
        "head 8x8x8->10",
        "merge concat/2 @8x8x8",
        "merge concat/3 @8x8x8",
        "primitive avgpool(kernel=3) @8x8x8",
        "primitive conv(kernel=1,dilation=1,act=relu) @8x8x8",
        "primitive conv(kernel=3,dilation=1,act=relu) @8x8x8",
        "primitive dwconv(kernel=3,dilation=1,act=relu) @8x8x8",
        "primitive maxpool(kernel=3) @8x8x8",
        "primitive mbconv(kernel=3,expand=2,se=0.25,act=silu) @8x8x8",
        "primitive sepconv(kernel=3,dilation=1,repeat=1,act=relu) @8x8x8",
        "primitive sepconv(kernel=5,dilation=1,repeat=1,act=relu) @8x8x8",
        "run",
        "stem conv3x3/s1 3x8x8->8",
    ];

    [Fact]
    public void CalibrateMeasuresEveryUnitOfTheSkeletonAndShowsProgress()
    {
        using var folder = new TempFolder();
        var table = folder.File("table.json");
        var result = ProcessRunner.Cellc(["calibrate", .. Small(folder), "--max-fan-in", "3", "--primitives", Declarations(folder),
            "--fit-networks", "3", "-o", table], null, null);
        Assert.True(result.ExitCode == 0, result.Stderr);
        // The anchor, 13 units, then the 3 whole networks of the fit.
        Assert.Contains("[1/17] anchor conv3x3/4 @32x16x16", result.Stderr);
        Assert.Contains("[14/17] merge concat/3", result.Stderr);
        Assert.Contains("[17/17] network 3 of the fit", result.Stderr);
        Assert.Contains("hold only", result.Stdout);
        Assert.Contains("Fitted to 3 whole networks", result.Stdout);

        var json = JsonNode.Parse(File.ReadAllText(table))!;
        var units = json["units"]!.AsArray();
        Assert.Equal(ExpectedUnits, units.Select(u => (string)u!["unit"]!).ToArray());
        Assert.All(units, u => Assert.True((double)u!["ms"]! >= 0));
        Assert.All(units, u => Assert.False(string.IsNullOrEmpty((string?)u!["how"])));
        Assert.Equal(TableConditions.Here(1, 17), LatencyTableFile.Read(table).Conditions);
        Assert.Empty(Directory.EnumerateFiles(folder.Path, "*.tmp"));
        var fit = LatencyTableFile.Read(table).Fit!;
        Assert.Equal(3, fit.Networks);
        Assert.True(fit.Slope > 0);
    }

    [Fact]
    public void WithoutFitNetworksATableKeepsNoFit()
    {
        // A calibration that fits nothing removes the fit of an earlier one: it does not hold for units measured again.
        using var folder = new TempFolder();
        var table = folder.File("table.json");
        Assert.Equal(0, ProcessRunner.Cellc(["calibrate", .. Small(folder), "--max-fan-in", "2", "--fit-networks", "3", "-o", table], null, null).ExitCode);
        Assert.NotNull(LatencyTableFile.Read(table).Fit);
        var again = ProcessRunner.Cellc(["calibrate", .. Small(folder), "--max-fan-in", "2", "--fit-networks", "0", "-o", table], null, null);
        Assert.True(again.ExitCode == 0, again.Stderr);
        Assert.Null(LatencyTableFile.Read(table).Fit);
        Assert.DoesNotContain("\"fit\"", File.ReadAllText(table));
    }

    [Fact]
    public void ASecondCalibrationAddsToTheTableButNeverUnderOtherConditions()
    {
        using var folder = new TempFolder();
        var table = folder.File("table.json");
        Assert.Equal(0, ProcessRunner.Cellc(["calibrate", .. Small(folder), "--max-fan-in", "2", "-o", table], null, null).ExitCode);
        var concat = LatencyTableFile.Read(table);

        var sum = ProcessRunner.Cellc(["calibrate", .. Small(folder), "--max-fan-in", "2", "--merge", "sum", "-o", table], null, null);
        Assert.True(sum.ExitCode == 0, sum.Stderr);
        var both = LatencyTableFile.Read(table);
        Assert.Contains("merge concat/2 @8x8x8", both.Units.Keys);
        Assert.Contains("merge sum/2 @8x8x8", both.Units.Keys);
        Assert.Equal(concat.Count + 1, both.Count);
        // The table keeps its first anchor: the concat units, not measured again, are on that scale.
        Assert.Equal(concat.Units["anchor conv3x3/4 @32x16x16"], both.Units["anchor conv3x3/4 @32x16x16"]);

        var before = File.ReadAllText(table);
        var threads = ProcessRunner.Cellc(["calibrate", .. Small(folder), "--threads", "2", "-o", table], null, null);
        Assert.Equal(2, threads.ExitCode);
        Assert.Contains("conditions.threads", threads.Stderr);
        Assert.Equal(before, File.ReadAllText(table)); // refused before anything was measured or written
    }

    [Fact]
    public void TooFewFitNetworksAreRefusedBeforeAnythingIsMeasured()
    {
        using var folder = new TempFolder();
        var table = folder.File("table.json");
        var result = ProcessRunner.Cellc(["calibrate", .. Small(folder), "--fit-networks", "2", "-o", table], null, null);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("--fit-networks must be 0 or at least 3", result.Stderr);
        Assert.False(File.Exists(table));
    }

    [Fact]
    public void CalibrateRefusesADamagedTable()
    {
        using var folder = new TempFolder();
        var table = folder.Write("table.json", "{\"format\": \"latency-table/1\", \"conditions\": {\"proc");
        var result = ProcessRunner.Cellc(["calibrate", .. Small(folder), "-o", table], null, null);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("cut short", result.Stderr);
    }

    [Fact]
    public void ThePlanOfTheProxyPresetCoversEveryStage()
    {
        var plan = Calibration.Plan(new CalibrationRequest(Input.SkeletonPresets.All["proxy"], Vocabulary.PrimitiveTable.BuiltinsOnly,
            CalibrationRequest.DefaultMaxFanIn, 1, 17));
        // 5 frame units (stem, 2 reductions, head, run) + 3 stages x (6 built-ins + merges of 2..6).
        Assert.Equal(5 + 3 * (6 + 5), plan.Count);
        Assert.Contains(plan, u => u.Key == "primitive sepconv(kernel=3,dilation=1,repeat=1,act=relu) @64x8x8");
        Assert.Contains(plan, u => u.Key == "reduce sepconv3x3 16x32x32->32");
    }
}
