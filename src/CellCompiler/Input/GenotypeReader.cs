using System.Text.Json;
using System.Text.RegularExpressions;

namespace CellCompiler.Input;

/// <summary>
/// Parses and validates genotype JSON (contract section 1). Every structural limit is checked
/// while walking the document, before anything proportional to the expanded network is built.
/// </summary>
public static partial class GenotypeReader
{
    public const string FormatTag = "genotype/1";

    [GeneratedRegex("^[A-Za-z_][A-Za-z0-9_.-]{0,63}$")]
    private static partial Regex MotifNamePattern();

    public static Genotype ReadFile(string path)
    {
        var origin = path;
        byte[] bytes;
        try
        {
            var info = new FileInfo(path);
            if (!info.Exists)
                throw new InputException(origin, "", Directory.Exists(path) ? "is a folder, not a genotype file" : "file not found");
            if (info.Length > Limits.MaxJsonBytes)
                throw new InputException(origin, "",
                    $"the file is {info.Length:N0} bytes; the limit is {Limits.MaxJsonBytes:N0} bytes (1 MiB)");
            bytes = File.ReadAllBytes(path);
        }
        catch (IOException e) { throw new InputException(origin, "", $"cannot read the file: {e.Message}"); }
        catch (UnauthorizedAccessException e) { throw new InputException(origin, "", $"cannot read the file: {e.Message}"); }
        return Parse(bytes, origin, Path.GetFileNameWithoutExtension(path));
    }

    /// <summary>Parses one genotype document. <paramref name="defaultName"/> is used when the document has no name.</summary>
    /// <remarks>An `id` (a population line's field) is accepted everywhere, so a line saved as a file still compiles.</remarks>
    public static Genotype Parse(ReadOnlyMemory<byte> utf8, string origin, string defaultName)
    {
        using var document = JsonWalk.ParseDocument(origin, utf8);
        var root = new JsonWalk(origin, document.RootElement, "");
        return ReadGenotype(root.RequireObject("format", "name", "levels", "id"), defaultName);
    }

    public static Genotype Parse(string json, string origin, string defaultName) =>
        Parse(System.Text.Encoding.UTF8.GetBytes(json), origin, defaultName);

    private static Genotype ReadGenotype(JsonWalk root, string defaultName)
    {
        var format = root.Required("format").RequireString();
        if (format != FormatTag)
            throw root.Property("format").Error($"unsupported format \"{format}\"; expected \"{FormatTag}\"");

        string? id = null;
        if (root.Has("id"))
        {
            var idWalk = root.Property("id");
            id = idWalk.Element.ValueKind switch
            {
                JsonValueKind.String => idWalk.Element.GetString()!,
                JsonValueKind.Number => idWalk.Element.GetRawText(),
                _ => throw idWalk.Error($"expected a string or a number, found {JsonWalk.Describe(idWalk.Element)}"),
            };
            if (id.Length == 0 || id.Length > 256) throw idWalk.Error("an id must have 1 to 256 characters");
            if (id.Any(char.IsControl)) throw idWalk.Error("an id may not hold control characters");
        }

        var name = id ?? defaultName;
        if (root.Has("name"))
        {
            var nameWalk = root.Property("name");
            name = nameWalk.RequireString();
            if (name.Length == 0 || name.Length > 256) throw nameWalk.Error("a name must have 1 to 256 characters");
            if (name.Any(char.IsControl)) throw nameWalk.Error("a name may not hold control characters");
        }

        var levelsWalk = root.Required("levels");
        var levelCount = levelsWalk.RequireArray(1, Limits.MaxLevels, "levels");
        var levels = new List<Level>(levelCount);
        for (var k = 0; k < levelCount; k++)
            levels.Add(ReadLevel(levelsWalk.Item(k), k, levelCount, k == 0 ? null : levels[k - 1]));

        var genotype = new Genotype(name, levels, id);
        CheckExpandedSize(genotype, root.Origin);
        return genotype;
    }

    private static Level ReadLevel(JsonWalk walk, int k, int levelCount, Level? below)
    {
        walk.RequireObject("nodes", "motifs");
        var nodes = walk.Required("nodes").RequireInt(Limits.MinNodes, Limits.MaxNodes);
        var motifsWalk = walk.Required("motifs");
        if (motifsWalk.Element.ValueKind != JsonValueKind.Object)
            throw motifsWalk.Error($"expected an object mapping motif names to motifs, found {JsonWalk.Describe(motifsWalk.Element)}");

        motifsWalk.RequireUniqueKeys();
        var count = 0;
        foreach (var _ in motifsWalk.Element.EnumerateObject()) count++;
        if (count == 0) throw motifsWalk.Error("a level needs at least one motif");
        if (count > Limits.MaxMotifsPerLevel)
            throw motifsWalk.Error($"has {count} motifs; the limit is {Limits.MaxMotifsPerLevel} per level");
        var isTop = k == levelCount - 1;
        if (isTop && count != 1)
            throw motifsWalk.Error($"the last level defines the cell and must hold exactly one motif, found {count}");

        var motifs = new List<Motif>(count);
        foreach (var property in motifsWalk.Element.EnumerateObject())
        {
            var motifWalk = new JsonWalk(walk.Origin, property.Value, JsonWalk.Join(motifsWalk.Path, property.Name));
            if (!MotifNamePattern().IsMatch(property.Name))
                throw motifWalk.Error($"invalid motif name '{property.Name}': names match [A-Za-z_][A-Za-z0-9_.-]{{0,63}}");
            if (Primitives.IsPrimitive(property.Name))
                throw motifWalk.Error($"motif name '{property.Name}' shadows the primitive of the same name");
            motifs.Add(ReadMotif(motifWalk, property.Name, nodes, k, below));
        }
        return new Level(nodes, motifs);
    }

    private static Motif ReadMotif(JsonWalk walk, string name, int nodes, int k, Level? below)
    {
        walk.RequireObject("edges");
        var edgesWalk = walk.Required("edges");
        var maxEdges = nodes * (nodes - 1) / 2;
        var edgeCount = edgesWalk.RequireArray(0, maxEdges, "edges");
        var edges = new List<Edge>(edgeCount);
        var seen = new HashSet<(int, int)>();
        for (var e = 0; e < edgeCount; e++)
        {
            var edgeWalk = edgesWalk.Item(e);
            if (edgeWalk.Element.ValueKind != JsonValueKind.Array || edgeWalk.Element.GetArrayLength() != 3)
                throw edgeWalk.Error($"an edge is [from, to, op], found {JsonWalk.Describe(edgeWalk.Element)}"
                    + (edgeWalk.Element.ValueKind == JsonValueKind.Array ? $" of length {edgeWalk.Element.GetArrayLength()}" : ""));
            var from = ReadNodeIndex(edgeWalk, 0, "from");
            var to = ReadNodeIndex(edgeWalk, 1, "to");
            if (from < 0 || from > nodes - 1 || to < 0 || to > nodes - 1)
                throw edgeWalk.Error($"node index out of range: [{from}, {to}] but this level has nodes 0 to {nodes - 1}");
            if (from >= to)
                throw edgeWalk.Error($"edge [{from}, {to}] must point forward (from < to)");
            if (!seen.Add((from, to)))
                throw edgeWalk.Error($"duplicate edge: the pair [{from}, {to}] appears more than once");
            var opWalk = edgeWalk.Item(2);
            var op = opWalk.RequireString();
            CheckOp(edgeWalk, op, k, below);
            edges.Add(new Edge(from, to, op, e));
        }
        return new Motif(name, edges);
    }

    private static int ReadNodeIndex(JsonWalk edgeWalk, int position, string role)
    {
        var item = edgeWalk.Item(position);
        if (item.Element.ValueKind != JsonValueKind.Number || !item.Element.TryGetInt32(out var value))
            throw edgeWalk.Error($"the '{role}' node must be an integer, found {JsonWalk.Describe(item.Element)}");
        return value;
    }

    private static void CheckOp(JsonWalk edgeWalk, string op, int k, Level? below)
    {
        if (below is null)
        {
            if (!Primitives.IsPrimitive(op))
                throw edgeWalk.Error($"unknown op '{op}' at level 0; primitives are: {string.Join(", ", Primitives.All)}");
            return;
        }
        if (Primitives.IsStructural(op) || below.Find(op) is not null) return;
        if (Primitives.IsPrimitive(op))
            throw edgeWalk.Error($"primitive '{op}' cannot be used at level {k}: levels above 0 use motifs of level {k - 1}, identity or none");
        throw edgeWalk.Error($"undefined motif '{op}': level {k - 1} defines {string.Join(", ", below.Motifs.Select(m => m.Name))}");
    }

    private static void CheckExpandedSize(Genotype genotype, string origin)
    {
        if (ExpansionSize.CellPrimitiveOps(genotype) > Limits.MaxExpandedPrimitiveOps)
            throw new InputException(origin, $"levels[{genotype.TopLevel}].motifs.{genotype.Cell.Name}",
                $"the fully expanded cell has more than {Limits.MaxExpandedPrimitiveOps:N0} primitive ops (the limit)");
    }
}
