using CellCompiler.Graph;

namespace CellCompiler.Runtime;

/// <summary>One part's share of kernel time.</summary>
public sealed record TimeShare(string Part, double Microseconds, double Percent);

/// <summary>
/// Kernel time attributed to parts of the network. For our models the parts come from the
/// hierarchical node names, read only through <see cref="NodePath"/> (stem, each cell, each
/// reduction, head) and motifs are ranked by the time of all nodes under them; for other models the
/// parts are ONNX op types. Nodes the runtime created itself (layout reorders) and cannot be traced
/// back count as "other".
/// </summary>
public sealed record LatencyBreakdown(IReadOnlyList<TimeShare> Parts, IReadOnlyList<TimeShare> TopMotifs, bool ByOpType, int Runs)
{
    public double MicrosecondsPerRun => Runs == 0 ? 0 : Parts.Sum(p => p.Microseconds) / Runs;

    public const string Other = "other";

    /// <param name="ours">The model was made by this tool: its node names are <see cref="NodePath"/>s.</param>
    public static LatencyBreakdown FromProfile(KernelProfile profile, bool ours, int topMotifs = 5)
    {
        var total = profile.TotalMicroseconds;
        var byPart = new Dictionary<NetworkPart, double>();
        var byType = new Dictionary<string, double>(StringComparer.Ordinal);
        var byMotif = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (var (node, micros) in profile.MicrosecondsByNode)
        {
            if (!ours)
            {
                var type = profile.OpTypeByNode.GetValueOrDefault(node, Other);
                byType[type] = byType.GetValueOrDefault(type) + micros;
                continue;
            }
            var part = NodePath.PartOf(node);
            byPart[part] = byPart.GetValueOrDefault(part) + micros;
            foreach (var motif in NodePath.AppliedMotifs(node).Distinct(StringComparer.Ordinal))
                byMotif[motif] = byMotif.GetValueOrDefault(motif) + micros;
        }
        var parts = ours
            ? byPart.OrderBy(kv => Order(kv.Key)).Select(kv => Share(kv.Key.ToString(), kv.Value, total)).ToList()
            : byType.OrderByDescending(kv => kv.Value).ThenBy(kv => kv.Key, StringComparer.Ordinal).Select(kv => Share(kv.Key, kv.Value, total)).ToList();
        var motifs = byMotif.Select(kv => Share(kv.Key, kv.Value, total))
            .OrderByDescending(s => s.Microseconds).ThenBy(s => s.Part, StringComparer.Ordinal).Take(topMotifs).ToList();
        return new LatencyBreakdown(parts, motifs, !ours, profile.Runs);
    }

    private static TimeShare Share(string part, double micros, double total) => new(part, micros, total > 0 ? 100 * micros / total : 0);

    /// <summary>Network order: stem, then each stage's cells and the reduction after it, then head, then other.</summary>
    private static (int, int, int) Order(NetworkPart part) => part.Kind switch
    {
        NetworkPartKind.Stem => (0, 0, 0),
        NetworkPartKind.Cell => (1, part.Stage * 2, part.Cell),
        NetworkPartKind.Reduction => (1, part.Stage * 2 + 1, 0),
        NetworkPartKind.Head => (2, 0, 0),
        NetworkPartKind.Other => (3, 0, 0),
        _ => throw new InvalidOperationException($"unknown network part kind {part.Kind}"),
    };
}
