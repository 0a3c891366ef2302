using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Prediction;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Every unit is scaled to the table's anchor (<see cref="AnchorUnit"/>): a table whose anchor took
/// 50 times longer when it was made (as if the machine had run 50 times slower then) gets units 50
/// times longer when they are measured on first use now. The factor is far beyond what timing noise
/// does (tens of percent here; the bounds allow a factor of 3 to 5 either way), so they hold on a busy
/// machine, and a unit left off the anchor's scale reads about 1; no time itself is asserted.
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

        Assert.InRange(slowMs / ownMs, 15, 150);
        // Unit by unit too, not only their sum: a chain's difference, and the frame's profiled parts (stem and head; a
        // part left off the anchor's scale would read about 1 here, its time going to `run`). One tiny part of a
        // frame this small can be squeezed to almost nothing when the profiled parts outgrow the run, so the two
        // parts are taken together and the bounds are wide.
        var conv = "primitive conv(kernel=3,dilation=1,act=relu) @8x8x8";
        Assert.InRange(slow.Table.Units[conv].Ms / own.Table.Units[conv].Ms, 10, 250);
        double Parts(LatencyTable table) => table.Units["stem conv3x3/s1 3x8x8->8"].Ms + table.Units["head 8x8x8->10"].Ms;
        Assert.InRange(Parts(slow.Table) / Parts(own.Table), 5, 500);
        // The reference itself is kept, never measured again.
        Assert.Equal(anchor.Ms * 50, slow.Table.Find(AnchorUnit.Instance)!.Ms);
    }
}
