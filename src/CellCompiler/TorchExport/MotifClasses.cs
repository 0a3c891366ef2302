using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Vocabulary;

namespace CellCompiler.TorchExport;

/// <summary>
/// One class per motif the cell reaches through live edges, lowest level first. Its forward walks
/// the motif's live edges in node order as the lowerer does (dead code left out by the same
/// <see cref="Liveness"/>): an identity edge passes its tensor on, any other edge calls the
/// submodule e{i} (the primitive's or the lower motif's class), and a node with several inputs
/// merges them with <see cref="MacroLayers.Merge"/> at n{j}.
/// </summary>
internal static class MotifClasses
{
    /// <summary>The motifs reachable from the cell through live edges, as (level, name).</summary>
    public static HashSet<(int Level, string Name)> Used(Genotype genotype, Liveness liveness)
    {
        var used = new HashSet<(int, string)>();
        var pending = new Stack<(int Level, string Name)>();
        pending.Push((genotype.TopLevel, genotype.Cell.Name));
        while (pending.Count > 0)
        {
            var (level, name) = pending.Pop();
            if (!used.Add((level, name)) || level == 0) continue;
            foreach (var edge in liveness.Of(level, name).LiveEdges)
                if (edge.Op != Primitives.Identity) pending.Push((level - 1, edge.Op));
        }
        return used;
    }

    /// <summary>The primitive names the used level-0 motifs apply on live edges.</summary>
    public static HashSet<string> UsedPrimitives(Liveness liveness, IEnumerable<(int Level, string Name)> usedMotifs) =>
        usedMotifs.Where(m => m.Level == 0)
            .SelectMany(m => liveness.Of(0, m.Name).LiveEdges)
            .Select(e => e.Op)
            .Where(op => op != Primitives.Identity)
            .ToHashSet(StringComparer.Ordinal);

    /// <summary>Writes the used motifs' classes; returns the class name of each.</summary>
    public static IReadOnlyDictionary<(int Level, string Name), string> Write(
        Genotype genotype, Liveness liveness, MergeMode merge, IReadOnlySet<(int Level, string Name)> used,
        IReadOnlyDictionary<string, string> primitiveClasses, ClassNames names, List<(PyClass Class, string Result)> classes)
    {
        var classOf = new Dictionary<(int, string), string>();
        for (var level = 0; level < genotype.Levels.Count; level++)
        {
            foreach (var motif in genotype.Levels[level].Motifs)
            {
                if (!used.Contains((level, motif.Name))) continue;
                var className = names.Take("Motif", motif.Name);
                IReadOnlyDictionary<string, string> below = level == 0
                    ? primitiveClasses
                    : classOf.Where(p => p.Key.Item1 == level - 1).ToDictionary(p => p.Key.Item2, p => p.Value, StringComparer.Ordinal);
                classes.Add(WriteMotif(genotype, liveness, merge, level, motif, className, below));
                classOf[(level, motif.Name)] = className;
            }
        }
        return classOf;
    }

    private static (PyClass, string) WriteMotif(Genotype genotype, Liveness liveness, MergeMode merge, int level, Motif motif,
        string className, IReadOnlyDictionary<string, string> below)
    {
        var nodes = genotype.Levels[level].Nodes;
        var role = level == genotype.TopLevel ? "the cell" : $"a motif of level {level}";
        var cls = new PyClass(className,
        [
            $"levels[{level}].motifs.{motif.Name}: {role}, {nodes} nodes; node 0 is x, node {nodes - 1} the output.",
            $"Submodule e(i) applies edge i of the motif's edge list; n(j) merges node j's inputs ({MacroLayers.MergeName(merge)}).",
            "Dead edges and nodes are left out. c is the cell's channel count C.",
        ], ["c"], ["x"]);
        var cell = PyChannels.Symbol("c");
        var mergeName = MacroLayers.MergeName(merge);
        var relative = new NodePath("");

        var tensors = new PyTensor?[nodes];
        tensors[0] = new PyTensor("x", cell);
        var inbound = new List<PyTensor>();
        var live = liveness.Of(level, motif.Name).LiveEdges; // sorted by target, then source
        var edgeIndex = 0;
        for (var j = 1; j < nodes; j++)
        {
            inbound.Clear();
            while (edgeIndex < live.Count && live[edgeIndex].To == j)
            {
                var edge = live[edgeIndex++];
                var source = tensors[edge.From]!;
                if (edge.Op == Primitives.Identity)
                {
                    inbound.Add(source);
                    continue;
                }
                var path = NodePath.ModuleSegments(relative.Edge(edge.Index, edge.Op).Value);
                var call = cls.Module(path, $"{below[edge.Op]}(c)");
                var output = cls.Variable(path);
                cls.Forward($"{output} = {call}({source.Variable})  # [{edge.From}, {edge.To}, {edge.Op}]");
                inbound.Add(new PyTensor(output, cell));
            }
            if (inbound.Count > 1)
            {
                cls.ForwardComment($"node {j}: {mergeName} of {string.Join(", ", inbound.Select(t => t.Variable))}");
                var scope = NodePath.ModuleSegments(relative.Merge(j, mergeName).Value);
                tensors[j] = MacroLayers.Merge(new TorchLayerSink(cls, scope, cell), merge, inbound.ToList());
            }
            else
            {
                tensors[j] = inbound.Count == 1 ? inbound[0] : null;
            }
        }
        return (cls, tensors[nodes - 1]!.Variable);
    }
}
