using System.Globalization;

namespace CellCompiler.Graph;

/// <summary>Which part of the macro network a node belongs to.</summary>
public enum NetworkPartKind { Stem, Cell, Reduction, Head, Other }

/// <summary>A part of the macro network: the stem, cell C of stage T, reduction T (between stages T and T+1), or the head.</summary>
public readonly record struct NetworkPart(NetworkPartKind Kind, int Stage = 0, int Cell = 0)
{
    public static readonly NetworkPart Other = new(NetworkPartKind.Other);

    /// <summary>The part's path prefix: "stem", "stage1/cell0", "reduce0", "head", or "other".</summary>
    public override string ToString() => Kind switch
    {
        NetworkPartKind.Stem => NodePath.StemName,
        NetworkPartKind.Head => NodePath.HeadName,
        NetworkPartKind.Cell => string.Create(CultureInfo.InvariantCulture, $"stage{Stage}/cell{Cell}"),
        NetworkPartKind.Reduction => string.Create(CultureInfo.InvariantCulture, $"reduce{Stage}"),
        NetworkPartKind.Other => "other",
        _ => throw new InvalidOperationException($"unknown network part kind {Kind}"),
    };
}

/// <summary>
/// The hierarchical name of a node of our networks, built and parsed in this one place:
/// <c>stage1/cell0/e2:reef/e0:anemone/e1:dwconv3x3/conv</c> is the conv of edge 1 (op dwconv3x3)
/// of the motif applied by edge 0 (motif anemone) of the motif applied by edge 2 (motif reef) of
/// cell 0 of stage 1. A merge at node 3 is <c>.../n3:concat/...</c> or <c>.../n3:sum</c>; the stem is
/// <c>stem/...</c>, the reduction after stage T is <c>reduceT/...</c>, the head <c>head/...</c>.
/// </summary>
public readonly record struct NodePath(string Value)
{
    public const string StemName = "stem";
    public const string HeadName = "head";
    private const char Separator = '/';

    public static NodePath Stem => new(StemName);
    public static NodePath Head => new(HeadName);
    public static NodePath Cell(int stage, int cell) => new(new NetworkPart(NetworkPartKind.Cell, stage, cell).ToString());
    public static NodePath Reduction(int afterStage) => new(new NetworkPart(NetworkPartKind.Reduction, afterStage).ToString());

    /// <summary>The path of edge <paramref name="index"/> (its position in the file) applying <paramref name="op"/>.</summary>
    public NodePath Edge(int index, string op) => new(string.Create(CultureInfo.InvariantCulture, $"{Value}/e{index}:{op}"));

    /// <summary>The path of the merge of node <paramref name="node"/>; <paramref name="mode"/> is "concat" or "sum".</summary>
    public NodePath Merge(int node, string mode) => new(string.Create(CultureInfo.InvariantCulture, $"{Value}/n{node}:{mode}"));

    /// <summary>A layer (or a group of layers) below this path, e.g. "conv", "bn", "se/reduce".</summary>
    public NodePath Layer(string name) => new($"{Value}/{name}");

    public override string ToString() => Value;

    /// <summary>
    /// The network part a node name belongs to. ONNX Runtime keeps our name as the prefix of the
    /// nodes it fuses or rewrites, so anything after the recognised prefix is ignored; a name that
    /// is not ours is <see cref="NetworkPart.Other"/>.
    /// </summary>
    public static NetworkPart PartOf(string nodeName)
    {
        var segments = nodeName.Split(Separator);
        if (segments.Length < 2) return NetworkPart.Other;
        if (segments[0] == StemName) return new NetworkPart(NetworkPartKind.Stem);
        if (segments[0] == HeadName) return new NetworkPart(NetworkPartKind.Head);
        if (Number(segments[0], "reduce") is { } reduction) return new NetworkPart(NetworkPartKind.Reduction, reduction);
        if (segments.Length >= 3 && Number(segments[0], "stage") is { } stage && Number(segments[1], "cell") is { } cell)
            return new NetworkPart(NetworkPartKind.Cell, stage, cell);
        return NetworkPart.Other;
    }

    /// <summary>The ops (primitive or motif names) applied by the edges on a node's path, outermost first.</summary>
    public static IReadOnlyList<string> AppliedOps(string nodeName)
    {
        var ops = new List<string>();
        foreach (var segment in nodeName.Split(Separator))
        {
            var colon = segment.IndexOf(':');
            if (colon > 1 && segment[0] == 'e' && IsDigits(segment.AsSpan(1, colon - 1)) && colon + 1 < segment.Length)
                ops.Add(segment[(colon + 1)..]);
        }
        return ops;
    }

    /// <summary>
    /// The motifs applied on a node's path, outermost first: the ops of edges under which another edge
    /// or a merge follows (the innermost edge of a layer applies a primitive, whose layers follow it).
    /// </summary>
    public static IReadOnlyList<string> AppliedMotifs(string nodeName)
    {
        var motifs = new List<string>();
        string? pending = null;
        foreach (var segment in nodeName.Split(Separator))
        {
            var colon = segment.IndexOf(':');
            var isEdge = colon > 1 && segment[0] == 'e' && IsDigits(segment.AsSpan(1, colon - 1)) && colon + 1 < segment.Length;
            var isMerge = colon > 1 && segment[0] == 'n' && IsDigits(segment.AsSpan(1, colon - 1));
            if ((isEdge || isMerge) && pending is not null) motifs.Add(pending);
            pending = isEdge ? segment[(colon + 1)..] : null;
        }
        return motifs;
    }

    /// <summary>
    /// The PyTorch module path of a node (`cellc export-torch`): each segment loses its ":op" and
    /// "/" becomes ".", so <c>stage1/cell0/e2:reef/e0:anemone/e1:dwconv3x3/conv</c> is
    /// <c>stage1.cell0.e2.e0.e1.conv</c>. Back the other way, segment e{i} of a motif is the path
    /// segment e{i}:{op} with op the genotype's op on that motif's edge i.
    /// </summary>
    public static string ModulePath(string nodeName) => string.Join('.', ModuleSegments(nodeName));

    /// <summary>The segments of <see cref="ModulePath"/>; empty segments (a relative path's leading "/") are skipped.</summary>
    public static IReadOnlyList<string> ModuleSegments(string nodeName)
    {
        var segments = new List<string>();
        foreach (var segment in nodeName.Split(Separator, StringSplitOptions.RemoveEmptyEntries))
        {
            var colon = segment.IndexOf(':');
            segments.Add(colon < 0 ? segment : segment[..colon]);
        }
        return segments;
    }

    /// <summary>The number after <paramref name="prefix"/> as the builders write it: digits without a leading zero ("stage01" is not ours).</summary>
    private static int? Number(string segment, string prefix)
    {
        if (!segment.StartsWith(prefix, StringComparison.Ordinal)) return null;
        var digits = segment.AsSpan(prefix.Length);
        if (!IsDigits(digits) || (digits.Length > 1 && digits[0] == '0')) return null;
        return int.TryParse(digits, NumberStyles.None, CultureInfo.InvariantCulture, out var n) ? n : null;
    }

    private static bool IsDigits(ReadOnlySpan<char> text)
    {
        if (text.IsEmpty) return false;
        foreach (var c in text)
            if (c is < '0' or > '9') return false;
        return true;
    }
}
