using CellCompiler.Input;

namespace CellCompiler.Lowering;

/// <summary>Expands one copy of the cell: the motif hierarchy, its primitives and its merges.</summary>
internal sealed class CellContext(Genotype genotype, Liveness liveness, MergeMode merge, int channels, NetworkBuilder builder)
{
    /// <summary>Lowers motif <paramref name="name"/> of level <paramref name="level"/> applied to tensor <paramref name="input"/>.</summary>
    public string LowerMotif(int level, string name, string input, string path)
    {
        var info = liveness.Of(level, name);
        var nodes = genotype.Levels[level].Nodes;
        var tensors = new string?[nodes];
        tensors[0] = input;
        var inbound = new List<string>();
        var edgeIndex = 0;
        var live = info.LiveEdges; // sorted by target, then source
        for (var j = 1; j < nodes; j++)
        {
            inbound.Clear();
            while (edgeIndex < live.Count && live[edgeIndex].To == j)
            {
                var edge = live[edgeIndex++];
                inbound.Add(Apply(level, edge, tensors[edge.From]!, $"{path}/e{edge.Index}:{edge.Op}"));
            }
            tensors[j] = inbound.Count switch
            {
                0 => null,
                1 => inbound[0],
                _ => Merge(inbound, $"{path}/n{j}:{MergeLabel}"),
            };
        }
        return tensors[nodes - 1]!;
    }

    private string MergeLabel => merge == MergeMode.Concat ? "concat" : "sum";

    private string Apply(int level, Edge edge, string input, string path)
    {
        if (level > 0 && !Primitives.IsStructural(edge.Op))
            return LowerMotif(level - 1, edge.Op, input, path);
        return edge.Op switch
        {
            Primitives.Identity => input,
            Primitives.Conv1x1 => builder.ConvBnRelu(path, input, 1, 1, channels),
            Primitives.Conv3x3 => builder.ConvBnRelu(path, input, 3, 1, channels),
            Primitives.DwConv3x3 => builder.BnRelu(path, builder.Depthwise($"{path}/conv", input, stride: 1)),
            Primitives.SepConv3x3 => builder.BnRelu(path,
                builder.Add(new ConvOp($"{path}/pw", builder.Depthwise($"{path}/dw", input, stride: 1), 1, 1, 0, channels, Depthwise: false))),
            Primitives.MaxPool3x3 => builder.Add(new MaxPoolOp($"{path}/pool", input, 3, 1, 1)),
            Primitives.AvgPool3x3 => builder.Add(new AveragePoolOp($"{path}/pool", input, 3, 1, 1)),
            _ => throw new InvalidOperationException($"op '{edge.Op}' reached lowering unvalidated"),
        };
    }

    private string Merge(List<string> inputs, string path)
    {
        if (merge == MergeMode.Sum)
            return builder.Add(new SumOp(path, inputs.ToArray()));
        var joined = builder.Add(new ConcatOp($"{path}/cat", inputs.ToArray()));
        return builder.ConvBnRelu(path, joined, 1, 1, channels);
    }
}
