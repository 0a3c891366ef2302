using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Onnx;
using CellCompiler.Vocabulary;

namespace CellCompiler.Lowering;

/// <summary>
/// Lowers a genotype and a skeleton to our network representation (contract sections 2 and 3):
/// stem, stages of cells with reductions between them, head. Every cell copy is expanded with
/// its own weights; node names are paths that lead back to the genotype (<see cref="NodePath"/>).
/// The opset matters only where an activation has no ONNX operator before it (hardswish before 14).
/// </summary>
public static class Lowerer
{
    public static Network Lower(Genotype genotype, Skeleton skeleton, int opset = OnnxVersions.DefaultOpset) =>
        Lower(genotype, skeleton, Liveness.Analyse(genotype), opset);

    /// <param name="liveness">The genotype's dead-code analysis, when the caller has it already.</param>
    public static Network Lower(Genotype genotype, Skeleton skeleton, Liveness liveness, int opset = OnnxVersions.DefaultOpset)
    {
        var cell = liveness.Cell(genotype);
        if (!cell.OutputIsLive)
            throw new DeadCellException(genotype.Cell.Name,
                $"no live path from node 0 to node {genotype.Levels[^1].Nodes - 1} of levels[{genotype.TopLevel}].motifs.{genotype.Cell.Name}");

        var builder = new NetworkBuilder(opset);
        var first = skeleton.Stages[0].Channels;
        var x = MacroLayers.Stem(builder.At(NodePath.Stem, first), skeleton, Network.DefaultInputName);
        for (var t = 0; t < skeleton.Stages.Count; t++)
        {
            var stage = skeleton.Stages[t];
            if (t > 0)
                x = MacroLayers.Reduction(builder.At(NodePath.Reduction(t - 1), stage.Channels), skeleton.Reduction, stage.Channels, x);
            for (var c = 0; c < stage.Cells; c++)
            {
                var context = new CellContext(genotype, liveness, skeleton.Merge, stage.Channels, builder);
                x = context.LowerMotif(genotype.TopLevel, genotype.Cell.Name, x, NodePath.Cell(t, c));
            }
        }
        MacroLayers.Head(builder.At(NodePath.Head, skeleton.Stages[^1].Channels), skeleton.Classes, x);
        builder.NameLastOutput(Network.DefaultOutputName);
        return new Network(Network.DefaultInputName, skeleton.Input, Network.DefaultOutputName, builder.Ops, Warnings(genotype, liveness));
    }

    /// <summary>
    /// Dead and unused motifs, dead and unconnected nodes, unused declared primitives, and a cell
    /// with nothing to train; each names its JSON path.
    /// </summary>
    public static IReadOnlyList<string> Warnings(Genotype genotype, Liveness liveness)
    {
        var warnings = new List<string>();
        for (var k = 0; k < genotype.Levels.Count; k++)
        {
            var nodeCount = genotype.Levels[k].Nodes;
            foreach (var motif in genotype.Levels[k].Motifs)
            {
                var info = liveness.Of(k, motif.Name);
                var path = $"levels[{k}].motifs.{motif.Name}";
                var usedAbove = k < genotype.TopLevel && genotype.Levels[k + 1].Motifs
                    .Any(m => m.Edges.Any(e => e.Op == motif.Name));
                var touched = new bool[nodeCount];
                foreach (var edge in motif.Edges.Where(e => e.Op != Primitives.None))
                    touched[edge.From] = touched[edge.To] = true;
                var deadTouched = info.DeadNodes.Where(n => touched[n]).ToList();
                var unconnected = Enumerable.Range(1, Math.Max(0, nodeCount - 2)).Where(n => !touched[n]).ToList();
                if (k < genotype.TopLevel && !usedAbove)
                {
                    warnings.Add($"{path}: motif '{motif.Name}' is never used");
                    continue;
                }
                if (!info.OutputIsLive && k < genotype.TopLevel)
                    warnings.Add($"{path}: motif '{motif.Name}' is dead (its output does not depend on its input); its uses lower to none");
                else if (deadTouched.Count > 0)
                    warnings.Add($"{path}: {Nodes(deadTouched)} dead; {(deadTouched.Count == 1 ? "its" : "their")} edges are removed");
                if (unconnected.Count > 0)
                    warnings.Add($"{path}: {Nodes(unconnected)} no edges at all");
            }
        }

        if (genotype.Declarations is { } declared)
        {
            var used = new HashSet<string>(genotype.Levels[0].Motifs.SelectMany(m => m.Edges).Select(e => e.Op), StringComparer.Ordinal);
            foreach (var (name, _) in declared.Declared)
                if (!used.Contains(name))
                    warnings.Add($"primitives.{name}: the declared primitive '{name}' is never used");
        }

        if (liveness.Cell(genotype).OutputIsLive && !HasTrainableOp(genotype, liveness))
            warnings.Add($"{TrivialCellNote}: levels[{genotype.TopLevel}].motifs.{genotype.Cell.Name}: the cell applies no op with trainable weights " +
                         "(only identity and pooling), so it learns nothing beyond its merges");
        return warnings;
    }

    /// <summary>The note that marks a cell with no trainable primitive, for records and reports to find without parsing prose.</summary>
    public const string TrivialCellNote = "trivial-cell";

    private static string Nodes(List<int> nodes) =>
        nodes.Count == 1 ? $"node {nodes[0]} has" : $"nodes {string.Join(", ", nodes)} have";

    /// <summary>Whether any live path of the expanded cell applies a primitive with trainable weights (merges do not count).</summary>
    public static bool HasTrainableOp(Genotype genotype, Liveness liveness)
    {
        var memo = new Dictionary<(int, string), bool>();
        bool Trainable(int level, string motif)
        {
            if (memo.TryGetValue((level, motif), out var known)) return known;
            var result = false;
            foreach (var edge in liveness.Of(level, motif).LiveEdges)
            {
                if (edge.Op == Primitives.Identity) continue;
                result = level == 0 ? genotype.Primitives.Get(edge.Op).Trainable : Trainable(level - 1, edge.Op);
                if (result) break;
            }
            return memo[(level, motif)] = result;
        }
        return Trainable(genotype.TopLevel, genotype.Cell.Name);
    }
}
