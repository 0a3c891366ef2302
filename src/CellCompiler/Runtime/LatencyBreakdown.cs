namespace CellCompiler.Runtime;

/// <summary>One part's share of kernel time.</summary>
public sealed record TimeShare(string Part, double Microseconds, double Percent);

/// <summary>
/// Kernel time attributed to parts of the network. For our models the parts come from the
/// hierarchical node names (stem, each cell, each reduction, head) and motifs are ranked by the
/// time of all nodes under them; for other models the parts are ONNX op types. Nodes the runtime
/// created itself (layout reorders) and cannot be traced back count as "other".
/// </summary>
public sealed record LatencyBreakdown(IReadOnlyList<TimeShare> Parts, IReadOnlyList<TimeShare> TopMotifs, bool ByOpType, int Runs)
{
    public double MicrosecondsPerRun => Runs == 0 ? 0 : Parts.Sum(p => p.Microseconds) / Runs;

    public const string Other = "other";

    public static LatencyBreakdown FromProfile(KernelProfile profile, IReadOnlySet<string>? motifNames, int topMotifs = 5)
    {
        var total = profile.TotalMicroseconds;
        var byPart = new Dictionary<string, double>(StringComparer.Ordinal);
        var byMotif = new Dictionary<string, double>(StringComparer.Ordinal);
        var ours = motifNames is not null;
        foreach (var (node, micros) in profile.MicrosecondsByNode)
        {
            var part = ours ? PartOf(node) : profile.OpTypeByNode.GetValueOrDefault(node, Other);
            byPart[part] = byPart.GetValueOrDefault(part) + micros;
            if (!ours) continue;
            foreach (var motif in MotifsOnPath(node, motifNames!))
                byMotif[motif] = byMotif.GetValueOrDefault(motif) + micros;
        }
        var parts = byPart.Select(kv => Share(kv.Key, kv.Value, total)).OrderBy(s => ours ? PartOrder(s.Part) : (0, 0, -s.Microseconds, s.Part)).ToList();
        var motifs = byMotif.Select(kv => Share(kv.Key, kv.Value, total)).OrderByDescending(s => s.Microseconds).Take(topMotifs).ToList();
        return new LatencyBreakdown(parts, motifs, !ours, profile.Runs);
    }

    private static TimeShare Share(string part, double micros, double total) => new(part, micros, total > 0 ? 100 * micros / total : 0);

    /// <summary>stem, stageT/cellC, reduceT or head; the runtime keeps our name as the prefix of nodes it fuses.</summary>
    public static string PartOf(string node)
    {
        var segments = node.Split('/');
        if (segments.Length < 2) return Other;
        if (segments[0] is "stem" or "head" || segments[0].StartsWith("reduce", StringComparison.Ordinal))
            return segments[0];
        if (segments.Length >= 3 && segments[0].StartsWith("stage", StringComparison.Ordinal) && segments[1].StartsWith("cell", StringComparison.Ordinal))
            return $"{segments[0]}/{segments[1]}";
        return Other;
    }

    private static IEnumerable<string> MotifsOnPath(string node, IReadOnlySet<string> motifNames) =>
        node.Split('/').Select(s => s.IndexOf(':') is var colon and > 0 ? s[(colon + 1)..] : "")
            .Where(motifNames.Contains).Distinct();

    /// <summary>Network order: stem, then stages with their reductions, then head, then other.</summary>
    private static (int, int, double, string) PartOrder(string part)
    {
        if (part == "stem") return (0, 0, 0, part);
        if (part.StartsWith("stage", StringComparison.Ordinal))
        {
            var pieces = part.Split('/');
            return (1, int.Parse(pieces[0][5..]) * 2 + 1, int.Parse(pieces[1][4..]), part);
        }
        if (part.StartsWith("reduce", StringComparison.Ordinal)) return (1, int.Parse(part[6..]) * 2 + 2, 0, part);
        if (part == "head") return (2, 0, 0, part);
        return (3, 0, 0, part);
    }
}
