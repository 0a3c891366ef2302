using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Prediction;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Every unit is scaled to the table's anchor (<see cref="AnchorUnit"/>): a table whose anchor took
/// 50 times longer when it was made (as if the machine had run 50 times slower then) gets units 50
/// times longer when they are measured on first use now. The factor is far beyond what timing noise
/// does (tens of percent here), so the bounds hold on a busy machine; no time itself is asserted.
/// </summary>
public sealed class LatencyAnchorTests
{
    [Fact]
    public void UnitsMeasuredOnFirstUseAreOnTheScaleOfTheTablesAnchor()
    {
        using var folder = new TempFolder();
        // The small one-stage skeleton of the calibration tests keeps the probes short.
        var skeleton = SkeletonReader.Resolve(folder.Write("small.json", CalibrationTests.SmallSkeleton));
        var genotype = GenotypeReader.Parse(
            """{"format": "genotype/1", "name": "anchor-probe", "levels": [{"nodes": 3, "motifs": {"cell": {"edges": [[0, 1, "conv3x3"], [1, 2, "sepconv3x3"], [0, 2, "maxpool3x3"]]}}}]}""",
            "anchor-probe", "anchor-probe");
        var here = TableConditions.Here(1, 17);

        // A table without an anchor: the meter times the anchor first and the table gains it as its reference.
        var own = LatencyPredictor.InMemory(new LatencyTable(here, []));
        var ownMs = own.Predict(genotype, Liveness.Analyse(genotype), skeleton);
        var anchor = own.Table.Find(AnchorUnit.Instance);
        Assert.NotNull(anchor);
        Assert.True(anchor.Ms > 0, $"the anchor's reference is a positive time: {anchor.Ms}");

        var slowAnchor = new KeyValuePair<string, UnitTime>(AnchorUnit.Instance.Key, anchor with { Ms = anchor.Ms * 50 });
        var slow = LatencyPredictor.InMemory(new LatencyTable(here, [slowAnchor]));
        var slowMs = slow.Predict(genotype, Liveness.Analyse(genotype), skeleton);

        Assert.InRange(slowMs / ownMs, 25, 100);
        // The reference itself is kept, never measured again.
        Assert.Equal(anchor.Ms * 50, slow.Table.Find(AnchorUnit.Instance)!.Ms);
    }
}
