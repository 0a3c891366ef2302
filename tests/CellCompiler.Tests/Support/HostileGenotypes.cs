namespace CellCompiler.Tests.Support;

/// <summary>Genotypes made to press against the contract's limits (test data only).</summary>
public static class HostileGenotypes
{
    /// <summary>
    /// Level 0: one 64-node motif with all 2,016 forward edges (2,016 ops). Level 1: the cell applies it
    /// on 30 edges, 60,480 ops per cell, within the per-cell limit; a skeleton of 3 cells (proxy) stacks
    /// 181,440 ops, over the contract's 100,000 for the fully expanded network.
    /// </summary>
    public static string OverTheNetworkOpLimit()
    {
        var full = string.Join(",", from j in Enumerable.Range(1, 63) from i in Enumerable.Range(0, j) select $"[{i},{j},\"conv1x1\"]");
        var uses = string.Join(",", Enumerable.Range(1, 30).Select(j => $"[{j - 1},{j},\"big\"]"));
        return "{\"format\":\"genotype/1\",\"levels\":[{\"nodes\":64,\"motifs\":{\"big\":{\"edges\":[" + full +
               "]}}},{\"nodes\":31,\"motifs\":{\"cell\":{\"edges\":[" + uses + "]}}}]}";
    }
}
