using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Prediction;

namespace CellCompiler.Tests;

/// <summary>
/// Predictions from units measured on this machine rank three networks of clearly different size in
/// the right order. The networks differ by more than ten times in MACs and in kernel count, so the
/// order holds on a busy machine too; accuracy itself is measured by bench/latency-accuracy.sh, never
/// in a unit test.
/// </summary>
public sealed class PredictionRankTests
{
    private static Genotype Flat(string name, int nodes, Func<int, int, string?> op)
    {
        var edges = new List<string>();
        for (var j = 1; j < nodes; j++)
            for (var i = 0; i < j; i++)
                if (op(i, j) is { } o) edges.Add($"[{i}, {j}, \"{o}\"]");
        var json = "{\"format\": \"genotype/1\", \"name\": \"" + name + "\", \"levels\": [{\"nodes\": " + nodes +
                   ", \"motifs\": {\"cell\": {\"edges\": [" + string.Join(", ", edges) + "]}}}]}";
        return GenotypeReader.Parse(json, name, name);
    }

    [Fact]
    public void PredictionsRankSmallMediumAndLargeNetworks()
    {
        // One pooling edge; a chain of three conv3x3; every pair of 8 nodes a conv3x3 (28 convs, 6 merges of 2 to 7 inputs).
        var small = Flat("tidepool-small", 2, (_, _) => "maxpool3x3");
        var medium = Flat("tidepool-medium", 4, (i, j) => j == i + 1 ? "conv3x3" : null);
        var large = Flat("tidepool-large", 8, (_, _) => "conv3x3");
        var skeleton = SkeletonPresets.All["proxy"];
        // An empty table: every unit is measured on first use, as `check --latency-table` does.
        var predictor = LatencyPredictor.InMemory(new LatencyTable(TableConditions.Here(1, 17), []));

        var ms = new[] { small, medium, large }.Select(g => predictor.Predict(g, Liveness.Analyse(g), skeleton)).ToArray();
        Assert.True(ms[0] > 0, $"a prediction is a positive time: {ms[0]}");
        Assert.True(ms[0] < ms[1] && ms[1] < ms[2], $"predicted {string.Join(" < ", ms)} ms should rise with the network's size");
        // Every unit the three networks hold is now in the table: the frame's, the two primitives' and the merges' at three sites; and the anchor.
        Assert.Equal(5 + 3 * (2 + 6) + 1, predictor.Table.Count);
    }
}
