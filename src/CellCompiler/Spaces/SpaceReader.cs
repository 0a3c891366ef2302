using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Sampling;
using CellCompiler.Vocabulary;

namespace CellCompiler.Spaces;

/// <summary>
/// Parses and validates space/1 JSON (issue 13): `format`, an optional `name`, optional `primitives`
/// (declarations exactly as in a genotype, read by <see cref="PrimitiveDeclarations"/>) and `levels`,
/// each with `nodes`, `motifs` (default 1) and `ops`. Every problem names its JSON path and all of
/// them are reported together (up to <see cref="InputException.MaxProblems"/>). A space is refused
/// when some genotype of it would break a genotype limit (contract section 1), so every genotype it
/// counts is one `compile` and `check` accept.
/// </summary>
public static class SpaceReader
{
    private static readonly string[] Fields = ["format", "name", "primitives", "levels"];
    private static readonly string[] LevelFields = ["nodes", "motifs", "ops"];

    public static SearchSpace ReadFile(string path) =>
        Parse(Io.BoundedFile.ReadAll(path, Limits.MaxJsonBytes, "a space file"), path, Path.GetFileNameWithoutExtension(path));

    public static SearchSpace Parse(string json, string origin, string defaultName) =>
        Parse(System.Text.Encoding.UTF8.GetBytes(json), origin, defaultName);

    public static SearchSpace Parse(ReadOnlyMemory<byte> utf8, string origin, string defaultName)
    {
        using var document = JsonWalk.ParseDocument(origin, utf8);
        var root = new JsonWalk(origin, document.RootElement, "");
        var problems = new ProblemList(origin);
        var space = root.RequireObject(problems, Fields) ? ReadSpace(root, defaultName, problems) : null;
        problems.ThrowIfAny();
        return space!;
    }

    private static SearchSpace? ReadSpace(JsonWalk root, string defaultName, ProblemList problems)
    {
        problems.Try(() =>
        {
            var format = root.Required("format").RequireString();
            if (format != SearchSpace.FormatTag)
                throw root.Property("format").Error($"unsupported format \"{format}\"; expected \"{SearchSpace.FormatTag}\"");
        });
        var name = defaultName;
        if (root.Has("name"))
            problems.Try(() =>
            {
                var walk = root.Property("name");
                var text = walk.RequireString();
                if (text.Length is 0 or > 256 || text.Any(char.IsControl))
                    throw walk.Error("a name has 1 to 256 characters and no control characters");
                name = text;
            });

        var (declared, table) = PrimitiveDeclarations.ReadField(root, problems);
        if (table is null) return null;

        if (GenotypeReader.LevelsField(root, problems) is not { } levelsField) return null;
        var (levelsWalk, levelCount) = levelsField;
        var levels = new List<SpaceLevel>(levelCount);
        for (var k = 0; k < levelCount; k++)
            if (ReadLevel(levelsWalk.Item(k), k, levelCount, table, problems) is { } level) levels.Add(level);
        if (problems.Any || levels.Count != levelCount) return null;

        CheckDeclarationNames(root, declared, levels, problems);
        var space = new SearchSpace(name, levels, table);
        CheckGenotypeLimits(levelsWalk, space, problems);
        return problems.Any ? null : space;
    }

    private static SpaceLevel? ReadLevel(JsonWalk walk, int k, int levelCount, PrimitiveTable table, ProblemList problems)
    {
        if (!walk.RequireObject(problems, LevelFields)) return null;
        int nodes = 0, motifs = 1;
        var ok = problems.Try(() => nodes = walk.Required("nodes").RequireInt(Limits.MinNodes, Limits.MaxNodes));
        if (walk.Has("motifs"))
            ok &= problems.Try(() =>
            {
                var motifsWalk = walk.Property("motifs");
                motifs = motifsWalk.RequireInt(1, Limits.MaxMotifsPerLevel);
                if (k == levelCount - 1 && motifs != 1)
                    throw motifsWalk.Error($"the last level defines the cell and must hold exactly one motif, found {motifs}");
            });
        var ops = ReadOps(walk, k, table, problems);
        return ok && ops is not null ? new SpaceLevel(nodes, motifs, ops) : null;
    }

    private static List<string>? ReadOps(JsonWalk walk, int k, PrimitiveTable table, ProblemList problems)
    {
        JsonWalk opsWalk = default;
        var count = 0;
        if (!problems.Try(() =>
            {
                opsWalk = walk.Required("ops");
                count = opsWalk.RequireArray(1, PrimitiveDeclarations.MaxDeclarations + 16, "ops");
            }))
            return null;
        var ops = new List<string>(count);
        var ok = true;
        for (var i = 0; i < count; i++)
        {
            var index = i;
            ok &= problems.Try(() =>
            {
                var item = opsWalk.Item(index);
                var op = item.RequireString();
                CheckOp(item, op, k, table);
                if (ops.Contains(op)) throw item.Error($"'{op}' is listed twice; each op is one label of the alphabet");
                ops.Add(op);
            });
        }
        return ok ? ops : null;
    }

    private static void CheckOp(JsonWalk item, string op, int k, PrimitiveTable table)
    {
        if (k == 0)
        {
            if (op == SearchSpace.AllMotifsBelow)
                throw item.Error("'*' stands for the motifs of the level below; level 0 has none and is built from primitives");
            if (!Primitives.IsStructural(op) && !table.IsPrimitive(op))
                throw item.Error($"unknown op '{op}' at level 0; ops are: {string.Join(", ", [Primitives.None, Primitives.Identity, .. table.Names])}");
            return;
        }
        if (op == SearchSpace.AllMotifsBelow || Primitives.IsStructural(op)) return;
        if (table.IsPrimitive(op))
            throw item.Error($"primitive '{op}' cannot be used at level {k}: levels above 0 use '*' (every motif of level {k - 1}), identity and none");
        throw item.Error($"unknown op '{op}' at level {k}: levels above 0 use '*' (every motif of level {k - 1}), identity and none");
    }

    /// <summary>Motifs get the names <c>cellc sample</c> gives them; a declared primitive may not take one (contract 3.1).</summary>
    private static void CheckDeclarationNames(JsonWalk root, List<(string Name, PrimitiveDefinition)> declared, List<SpaceLevel> levels, ProblemList problems)
    {
        foreach (var (name, _) in declared)
            for (var k = 0; k < levels.Count; k++)
                for (var i = 0; i < levels[k].Motifs; i++)
                    if (GenotypeSampler.MotifName(k, i, levels.Count) == name)
                        problems.Add(new InputException(root.Origin, JsonWalk.Join("primitives", name),
                            $"'{name}' is the name of motif {i} of levels[{k}] in this space's genotypes; declare the primitive under another name"));
    }

    /// <summary>Every genotype of the space must be a valid genotype: its expanded cell and its JSON within the limits.</summary>
    private static void CheckGenotypeLimits(JsonWalk levelsWalk, SearchSpace space, ProblemList problems)
    {
        var expanded = space.WorstCaseExpandedOps();
        if (expanded > Limits.MaxExpandedPrimitiveOps)
            problems.Add(levelsWalk.Error(
                $"a genotype of this space can expand to more than {Limits.MaxExpandedPrimitiveOps:N0} primitive ops (the genotype limit): " +
                "use fewer nodes or levels, or fewer levels whose ops include '*'"));
        var nodes = space.Levels.Select(l => l.Nodes).ToList();
        var motifs = space.Levels.Select(l => l.Motifs).ToList();
        var bytes = GenotypeSampler.WorstCaseJsonBytes(nodes, motifs, GenotypeSampler.MaxIdLength, space.Alphabet(0), space.Primitives);
        if (bytes > Limits.MaxJsonBytes)
            problems.Add(levelsWalk.Error(
                $"a genotype of this space can take {bytes:N0} bytes of JSON; the genotype limit is {Limits.MaxJsonBytes:N0} bytes (1 MiB): " +
                "use fewer motifs or nodes"));
    }
}
