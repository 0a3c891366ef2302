using CellCompiler.Input;

namespace CellCompiler.Lowering;

/// <summary>
/// Lowers a genotype and a skeleton to our network representation (contract sections 2 and 3):
/// stem, stages of cells with reductions between them, head. Every cell copy is expanded with
/// its own weights; node names are paths that lead back to the genotype.
/// </summary>
public static class Lowerer
{
    public static Network Lower(Genotype genotype, Skeleton skeleton) => Lower(genotype, skeleton, Liveness.Analyse(genotype));

    /// <param name="liveness">The genotype's dead-code analysis, when the caller has it already.</param>
    public static Network Lower(Genotype genotype, Skeleton skeleton, Liveness liveness)
    {
        var cell = liveness.Cell(genotype);
        if (!cell.OutputIsLive)
            throw new DeadCellException(genotype.Cell.Name,
                $"no live path from node 0 to node {genotype.Levels[^1].Nodes - 1} of levels[{genotype.TopLevel}].motifs.{genotype.Cell.Name}");

        var builder = new NetworkBuilder();
        var x = LowerStem(builder, skeleton, Network.DefaultInputName);
        for (var t = 0; t < skeleton.Stages.Count; t++)
        {
            var stage = skeleton.Stages[t];
            if (t > 0)
                x = LowerReduction(builder, skeleton.Reduction, $"reduce{t - 1}", x, stage.Channels);
            for (var c = 0; c < stage.Cells; c++)
            {
                var context = new CellContext(genotype, liveness, skeleton.Merge, stage.Channels, builder);
                x = context.LowerMotif(genotype.TopLevel, genotype.Cell.Name, x, $"stage{t}/cell{c}");
            }
        }
        LowerHead(builder, x, skeleton.Classes);
        return new Network(Network.DefaultInputName, skeleton.Input, Network.DefaultOutputName, builder.Ops, Warnings(genotype, liveness));
    }

    private static string LowerStem(NetworkBuilder builder, Skeleton skeleton, string input)
    {
        var x = builder.ConvBnRelu("stem", input, 3, skeleton.Stem.Stride, skeleton.Stages[0].Channels);
        if (skeleton.Stem.Pool)
            x = builder.Add(new MaxPoolOp("stem/pool", x, 3, 2, 1));
        return x;
    }

    private static string LowerReduction(NetworkBuilder builder, string op, string path, string input, int outChannels)
    {
        if (op == Primitives.Conv3x3)
            return builder.ConvBnRelu(path, input, 3, 2, outChannels);
        var depthwise = builder.Depthwise($"{path}/dw", input, stride: 2);
        var pointwise = builder.Add(new ConvOp($"{path}/pw", depthwise, 1, 1, 0, outChannels, Depthwise: false));
        return builder.BnRelu(path, pointwise);
    }

    private static void LowerHead(NetworkBuilder builder, string input, int classes)
    {
        var pooled = builder.Add(new GlobalAveragePoolOp("head/gap", input));
        var flat = builder.Add(new FlattenOp("head/flatten", pooled));
        builder.Add(new GemmOp("head/gemm", flat, classes) { OutputName = Network.DefaultOutputName });
    }

    /// <summary>Dead and unused motifs and dead nodes, each naming its JSON path.</summary>
    public static IReadOnlyList<string> Warnings(Genotype genotype, Liveness liveness)
    {
        var warnings = new List<string>();
        for (var k = 0; k < genotype.Levels.Count; k++)
        {
            foreach (var motif in genotype.Levels[k].Motifs)
            {
                var info = liveness.Of(k, motif.Name);
                var path = $"levels[{k}].motifs.{motif.Name}";
                var usedAbove = k < genotype.TopLevel && genotype.Levels[k + 1].Motifs
                    .Any(m => m.Edges.Any(e => e.Op == motif.Name));
                var touched = info.DeadNodes
                    .Where(n => motif.Edges.Any(e => e.Op != Primitives.None && (e.From == n || e.To == n)))
                    .ToList();
                if (k < genotype.TopLevel && !usedAbove)
                    warnings.Add($"{path}: motif '{motif.Name}' is never used");
                else if (!info.OutputIsLive && k < genotype.TopLevel)
                    warnings.Add($"{path}: motif '{motif.Name}' is dead (its output does not depend on its input); its uses lower to none");
                else if (touched.Count > 0)
                    warnings.Add($"{path}: node(s) {string.Join(", ", touched)} are dead; their edges are removed");
            }
        }
        return warnings;
    }
}
