using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The network hash API and the primitive seam: concat and sum classes, dead and pass-through
/// cells, and a custom <see cref="IPrimitiveExpander"/> whose layers make chains comparable.
/// </summary>
public sealed class HashNetworkTests
{
    private static Genotype Flat(int nodes, params (int From, int To, string Op)[] edges) =>
        GenotypeReader.Parse(
            "{\"format\":\"genotype/1\",\"levels\":[{\"nodes\":" + nodes + ",\"motifs\":{\"cell\":{\"edges\":["
                + string.Join(",", edges.Select(e => $"[{e.From},{e.To},\"{e.Op}\"]")) + "]}}}]}",
            "flat", "flat");

    private static GenotypeHashes Hashes(Genotype genotype, MergeMode merge) =>
        GenotypeHasher.Hashes(genotype, Liveness.Analyse(genotype), merge);

    [Fact]
    public void UnderConcatTheNetworkHashIsTheHash()
    {
        var genotype = GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-h3.json"));
        var hashes = Hashes(genotype, MergeMode.Concat);
        Assert.Equal(GenotypeHasher.Hash(genotype), hashes.Hash);
        Assert.Equal(hashes.Hash, hashes.NetworkHash);
        Assert.Equal(hashes.Hash, GenotypeHasher.NetworkHash(genotype, Liveness.Analyse(genotype), MergeMode.Concat));
        Assert.True(hashes.Exact);
    }

    [Fact]
    public void NestedSumsCoincideUnderSumButNotUnderConcat()
    {
        // (a + b) + c, nested through node 2, against a + b + c in one merge.
        var nested = Flat(4, (0, 1, "conv3x3"), (0, 2, "conv1x1"), (1, 2, "identity"), (2, 3, "identity"), (0, 3, "avgpool3x3"));
        var single = Flat(4, (0, 1, "conv3x3"), (0, 2, "conv1x1"), (0, 3, "avgpool3x3"), (1, 3, "identity"), (2, 3, "identity"));
        var nestedHashes = Hashes(nested, MergeMode.Sum);
        var singleHashes = Hashes(single, MergeMode.Sum);
        Assert.Equal(singleHashes.NetworkHash, nestedHashes.NetworkHash);
        Assert.NotEqual(singleHashes.Hash, nestedHashes.Hash);
        // A sum reached through an op is not a term of the outer sum: (a + b) -> pool, + c stays nested.
        var throughOp = Flat(4, (0, 1, "conv3x3"), (0, 2, "conv1x1"), (1, 2, "identity"), (2, 3, "maxpool3x3"), (0, 3, "avgpool3x3"));
        Assert.NotEqual(singleHashes.NetworkHash, Hashes(throughOp, MergeMode.Sum).NetworkHash);
    }

    [Fact]
    public void ACellWithoutMergesIsTheSameNetworkUnderBothModes()
    {
        var chain = Flat(3, (0, 1, "sepconv3x3"), (1, 2, "maxpool3x3"));
        Assert.Equal(Hashes(chain, MergeMode.Concat).NetworkHash, Hashes(chain, MergeMode.Sum).NetworkHash);
        var merged = Flat(3, (0, 1, "sepconv3x3"), (1, 2, "maxpool3x3"), (0, 2, "identity"));
        Assert.NotEqual(Hashes(merged, MergeMode.Concat).NetworkHash, Hashes(merged, MergeMode.Sum).NetworkHash);
    }

    [Fact]
    public void DeadCellsShareOneDigestAndAPassThroughCellHasItsOwn()
    {
        var deadA = Flat(3, (0, 1, "conv3x3"));
        var deadB = Flat(4, (1, 3, "conv1x1"), (0, 2, "identity"));
        var pass = Flat(3, (0, 1, "identity"), (1, 2, "identity"));
        var passDirect = Flat(2, (0, 1, "identity"));
        Assert.Equal(GenotypeHasher.Hash(deadA), GenotypeHasher.Hash(deadB));
        Assert.Equal(GenotypeHasher.Hash(pass), GenotypeHasher.Hash(passDirect));
        Assert.NotEqual(GenotypeHasher.Hash(deadA), GenotypeHasher.Hash(pass));
        Assert.Matches("^[0-9a-f]{64}$", GenotypeHasher.Hash(pass));
    }

    /// <summary>A stand-in for declared primitives: each op is a list of layers, and one op is a Mul join (as silu lowers).</summary>
    private sealed class LayeredExpander : IPrimitiveExpander
    {
        public int Expand(LayerGraph graph, string op, int input)
        {
            switch (op)
            {
                case "identity": return input;
                case "conv3x3": return graph.AddLayer("b", graph.AddLayer("a", input));
                case "conv1x1": return graph.AddLayer("a", input);
                case "dwconv3x3": return graph.AddLayer("b", input);
                case "maxpool3x3": return graph.AddJoin("mul", [input, graph.AddLayer("sigmoid", input)]);
                default: return graph.AddLayer(op, input);
            }
        }
    }

    private static string Layered(Genotype genotype, MergeMode merge = MergeMode.Concat) =>
        GenotypeHasher.Hashes(genotype, Liveness.Analyse(genotype), merge, new LayeredExpander()).NetworkHash;

    [Fact]
    public void ChainsOfLayersHashAlikeHoweverPrimitivesSplitThem()
    {
        // conv3x3 is the layers a, b: one edge equals the chain conv1x1 (a) -> dwconv3x3 (b).
        var whole = Flat(2, (0, 1, "conv3x3"));
        var split = Flat(3, (0, 1, "conv1x1"), (1, 2, "dwconv3x3"));
        var reversed = Flat(3, (0, 1, "dwconv3x3"), (1, 2, "conv1x1"));
        Assert.Equal(Layered(whole), Layered(split));
        Assert.NotEqual(Layered(whole), Layered(reversed));
        // The default expander keeps built-ins apart: one node per op.
        Assert.NotEqual(GenotypeHasher.Hash(whole), GenotypeHasher.Hash(split));

        // Inside a merge, and spread across a motif boundary.
        var inMerge = Flat(3, (0, 1, "conv3x3"), (1, 2, "maxpool3x3"), (0, 2, "conv1x1"));
        var hierarchical = GenotypeReader.Parse("""
            {"format":"genotype/1","levels":[
              {"nodes":3,"motifs":{"tail":{"edges":[[0,1,"dwconv3x3"],[1,2,"maxpool3x3"]]},"head":{"edges":[[0,2,"conv1x1"]]}}},
              {"nodes":3,"motifs":{"cell":{"edges":[[0,1,"head"],[1,2,"tail"],[0,2,"head"]]}}}]}
            """, "h", "h");
        Assert.Equal(Layered(inMerge), Layered(hierarchical));
        Assert.Equal(Layered(inMerge, MergeMode.Sum), Layered(hierarchical, MergeMode.Sum));
    }

    [Fact]
    public void TheLayerGraphRefusesMalformedNodes()
    {
        var graph = new LayerGraph();
        var a = graph.AddLayer("conv", LayerGraph.Input);
        Assert.Throws<ArgumentException>(() => graph.AddJoin("sum", [a]));
        Assert.Throws<ArgumentException>(() => graph.AddLayer("\u0001region", a));
        Assert.Throws<ArgumentException>(() => graph.AddLayer("", a));
        Assert.Throws<ArgumentOutOfRangeException>(() => graph.AddLayer("conv", a + 1));
        Assert.Equal(2, graph.AddJoin("mul", [a, a]));
    }
}
