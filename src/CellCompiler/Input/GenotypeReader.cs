using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Vocabulary;

namespace CellCompiler.Input;

/// <summary>
/// Parses and validates genotype JSON (contract sections 1 and 3.1). Every structural limit is
/// checked while walking the document, before anything proportional to the expanded network is
/// built. Validation goes on after a problem where it can, so one error report names every
/// mistake (up to <see cref="InputException.MaxProblems"/>).
/// </summary>
public static partial class GenotypeReader
{
    public const string FormatTag = "genotype/1";

    private static readonly string[] Fields = ["format", "name", "levels", "id", "primitives", "meta"];

    [GeneratedRegex("^[A-Za-z_][A-Za-z0-9_.-]{0,63}$")]
    private static partial Regex MotifNamePattern();

    public static Genotype ReadFile(string path) =>
        Parse(Io.BoundedFile.ReadAll(path, Limits.MaxJsonBytes, "a genotype file"), path, Path.GetFileNameWithoutExtension(path));

    /// <summary>Parses one genotype document. <paramref name="defaultName"/> is used when the document has no name.</summary>
    /// <remarks>An `id` (a population line's field) is accepted everywhere, so a line saved as a file still compiles.</remarks>
    public static Genotype Parse(ReadOnlyMemory<byte> utf8, string origin, string defaultName)
    {
        using var document = JsonWalk.ParseDocument(origin, utf8);
        var root = new JsonWalk(origin, document.RootElement, "");
        var problems = new ProblemList(origin);
        var genotype = root.RequireObject(problems, Fields) ? ReadGenotype(root, defaultName, problems) : null;
        problems.ThrowIfAny();
        CheckExpandedSize(genotype!, origin);
        return genotype!;
    }

    public static Genotype Parse(string json, string origin, string defaultName) =>
        Parse(System.Text.Encoding.UTF8.GetBytes(json), origin, defaultName);

    private static Genotype? ReadGenotype(JsonWalk root, string defaultName, ProblemList problems)
    {
        problems.Try(() =>
        {
            var format = root.Required("format").RequireString();
            if (format != FormatTag)
                throw root.Property("format").Error($"unsupported format \"{format}\"; expected \"{FormatTag}\"");
        });

        string? id = null;
        if (root.Has("id")) problems.Try(() => id = ReadLabel(root.Property("id"), "an id"));
        var name = id ?? defaultName;
        if (root.Has("name")) problems.Try(() => name = ReadLabel(root.Property("name"), "a name"));

        string? meta = null;
        if (root.Has("meta")) problems.Try(() => meta = ReadMeta(root.Property("meta")));

        var (declared, table) = PrimitiveDeclarations.ReadField(root, problems);
        if (table is null) return null;

        if (LevelsField(root, problems) is not { } levelsField) return null;
        var (levelsWalk, levelCount) = levelsField;

        var levels = new List<Level>(levelCount);
        for (var k = 0; k < levelCount; k++)
        {
            var level = ReadLevel(levelsWalk.Item(k), k, levelCount, k == 0 ? null : levels[k - 1], table, problems);
            // Later levels name this level's motifs: without them every edge above would be a second, derived error.
            if (level is null) return null;
            levels.Add(level);
        }
        CheckDeclarationNames(root, declared, levels, problems);
        return new Genotype(name, levels, id, declared.Count == 0 ? null : table, meta);
    }

    /// <summary>
    /// The required `levels` array of a genotype or a space document, 1 to <see cref="Limits.MaxLevels"/>
    /// long: its walk and length, or null with the problem recorded.
    /// </summary>
    internal static (JsonWalk Walk, int Count)? LevelsField(JsonWalk root, ProblemList problems)
    {
        if (!root.Has("levels"))
        {
            problems.Add(root.Error("missing required field 'levels'"));
            return null;
        }
        var walk = root.Property("levels");
        var count = 0;
        return problems.Try(() => count = walk.RequireArray(1, Limits.MaxLevels, "levels")) ? (walk, count) : null;
    }

    private static string ReadLabel(JsonWalk walk, string what)
    {
        if (walk.Element.ValueKind != JsonValueKind.String)
            throw walk.Error($"{what} must be a string, found {JsonWalk.Describe(walk.Element)}");
        var text = walk.Element.GetString()!;
        if (text.Length == 0 || text.Length > 256) throw walk.Error($"{what} must have 1 to 256 characters");
        if (text.Any(char.IsControl)) throw walk.Error($"{what} may not hold control characters");
        return text;
    }

    /// <summary>The user's own bookkeeping: any JSON object, kept as compact text and never read.</summary>
    private static string ReadMeta(JsonWalk walk)
    {
        if (walk.Element.ValueKind != JsonValueKind.Object)
            throw walk.Error($"meta must be a JSON object, found {JsonWalk.Describe(walk.Element)}");
        using var buffer = new MemoryStream();
        using (var writer = new Utf8JsonWriter(buffer, new JsonWriterOptions { Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
            walk.Element.WriteTo(writer);
        return System.Text.Encoding.UTF8.GetString(buffer.GetBuffer(), 0, (int)buffer.Length);
    }

    private static Level? ReadLevel(JsonWalk walk, int k, int levelCount, Level? below, PrimitiveTable table, ProblemList problems)
    {
        if (!walk.RequireObject(problems, "nodes", "motifs")) return null;
        var nodes = 0;
        if (!problems.Try(() => nodes = walk.Required("nodes").RequireInt(Limits.MinNodes, Limits.MaxNodes))) return null;
        JsonWalk motifsWalk = default;
        var count = 0;
        var ok = problems.Try(() =>
        {
            motifsWalk = walk.Required("motifs");
            if (motifsWalk.Element.ValueKind != JsonValueKind.Object)
                throw motifsWalk.Error($"expected an object mapping motif names to motifs, found {JsonWalk.Describe(motifsWalk.Element)}");
            motifsWalk.RequireUniqueKeys();
            foreach (var _ in motifsWalk.Element.EnumerateObject()) count++;
            if (count == 0) throw motifsWalk.Error("a level needs at least one motif");
            if (count > Limits.MaxMotifsPerLevel)
                throw motifsWalk.Error($"has {count} motifs; the limit is {Limits.MaxMotifsPerLevel} per level");
            if (k == levelCount - 1 && count != 1)
                throw motifsWalk.Error($"the last level defines the cell and must hold exactly one motif, found {count}");
        });
        if (!ok) return null;

        var motifs = new List<Motif>(count);
        foreach (var property in motifsWalk.Element.EnumerateObject())
        {
            var motifWalk = new JsonWalk(walk.Origin, property.Value, JsonWalk.Join(motifsWalk.Path, property.Name));
            problems.Try(() =>
            {
                if (!MotifNamePattern().IsMatch(property.Name))
                    throw motifWalk.Error($"invalid motif name '{property.Name}': names match [A-Za-z_][A-Za-z0-9_.-]{{0,63}}");
                if (Primitives.IsPrimitive(property.Name))
                    throw motifWalk.Error($"motif name '{property.Name}' shadows the primitive of the same name");
            });
            motifs.Add(ReadMotif(motifWalk, property.Name, nodes, k, below, table, problems));
        }
        return new Level(nodes, motifs);
    }

    private static Motif ReadMotif(JsonWalk walk, string name, int nodes, int k, Level? below, PrimitiveTable table, ProblemList problems)
    {
        var edges = new List<Edge>();
        if (!walk.RequireObject(problems, "edges")) return new Motif(name, edges);
        JsonWalk edgesWalk = default;
        var edgeCount = 0;
        if (!problems.Try(() =>
            {
                edgesWalk = walk.Required("edges");
                edgeCount = edgesWalk.RequireArray(0, nodes * (nodes - 1) / 2, "edges");
            }))
            return new Motif(name, edges);

        var seen = new HashSet<(int, int)>();
        for (var e = 0; e < edgeCount && !problems.Full; e++)
        {
            var index = e;
            problems.Try(() =>
            {
                var edgeWalk = edgesWalk.Item(index);
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
                var op = edgeWalk.Item(2).RequireString();
                CheckOp(edgeWalk, op, k, below, table);
                edges.Add(new Edge(from, to, op, index));
            });
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

    private static void CheckOp(JsonWalk edgeWalk, string op, int k, Level? below, PrimitiveTable table)
    {
        if (below is null)
        {
            if (!Primitives.IsStructural(op) && !table.IsPrimitive(op))
                throw edgeWalk.Error($"unknown op '{op}' at level 0; primitives are: {string.Join(", ", [Primitives.None, Primitives.Identity, .. table.Names])}");
            return;
        }
        if (Primitives.IsStructural(op) || below.Find(op) is not null) return;
        if (table.IsPrimitive(op))
            throw edgeWalk.Error($"primitive '{op}' cannot be used at level {k}: levels above 0 use motifs of level {k - 1}, identity or none");
        throw edgeWalk.Error($"undefined motif '{op}': level {k - 1} defines {string.Join(", ", below.Motifs.Select(m => m.Name))}");
    }

    /// <summary>A declared name may not also name a motif (contract 3.1): an edge's op would be ambiguous.</summary>
    private static void CheckDeclarationNames(JsonWalk root, List<(string Name, PrimitiveDefinition)> declared, List<Level> levels, ProblemList problems)
    {
        foreach (var (name, _) in declared)
            for (var k = 0; k < levels.Count; k++)
                if (levels[k].Find(name) is not null)
                    problems.Add(new InputException(root.Origin, JsonWalk.Join("primitives", name),
                        $"the declared primitive '{name}' has the name of a motif of levels[{k}]; rename one of them"));
    }

    private static void CheckExpandedSize(Genotype genotype, string origin)
    {
        if (ExpansionSize.CellPrimitiveOps(genotype) > Limits.MaxExpandedPrimitiveOps)
            throw new InputException(origin, $"levels[{genotype.TopLevel}].motifs.{genotype.Cell.Name}",
                $"the fully expanded cell has more than {Limits.MaxExpandedPrimitiveOps:N0} primitive ops (the limit)");
    }
}
