using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Vocabulary;

namespace CellCompiler.Input;

/// <summary>
/// Reads and validates declared primitives (contract section 3.1): a JSON object from names to
/// `{"kind": ..., parameters...}`, as the `primitives` field of a genotype or a file of its own.
/// Each problem names its JSON path (e.g. `primitives.wide5.kernel`).
/// </summary>
public static partial class PrimitiveDeclarations
{
    public const int MaxDeclarations = 256;

    [GeneratedRegex("^[a-z][a-z0-9_]{0,31}$")]
    private static partial Regex NamePattern();

    /// <summary>A file holding one JSON object of declarations (e.g. for `cellc sample --primitives`).</summary>
    public static PrimitiveTable ReadFile(string path) => Parse(Io.BoundedFile.ReadAll(path, Limits.MaxJsonBytes, "a primitives file"), path);

    /// <summary>One JSON object of declarations; <paramref name="origin"/> names it in errors.</summary>
    public static PrimitiveTable Parse(ReadOnlyMemory<byte> utf8, string origin)
    {
        using var document = JsonWalk.ParseDocument(origin, utf8);
        var problems = new ProblemList(origin);
        var declarations = Read(new JsonWalk(origin, document.RootElement, ""), problems);
        problems.ThrowIfAny();
        return new PrimitiveTable(declarations);
    }

    /// <summary>
    /// A document's optional `primitives` field (genotypes and spaces alike): the declarations in file
    /// order and their table (the built-ins alone when there are none); a null table when a
    /// declaration was bad, its problem already recorded.
    /// </summary>
    internal static (List<(string Name, PrimitiveDefinition Definition)> Declared, PrimitiveTable? Table) ReadField(JsonWalk root, ProblemList problems)
    {
        var declared = root.Has("primitives") ? Read(root.Property("primitives"), problems) : [];
        try { return (declared, declared.Count == 0 ? PrimitiveTable.BuiltinsOnly : new PrimitiveTable(declared)); }
        catch (ArgumentException) { return (declared, null); } // a bad name: already recorded by Read
    }

    internal static List<(string, PrimitiveDefinition)> Read(JsonWalk walk, ProblemList problems)
    {
        var declared = new List<(string, PrimitiveDefinition)>();
        if (walk.Element.ValueKind != JsonValueKind.Object)
        {
            problems.Add(walk.Error($"expected an object mapping primitive names to declarations, found {JsonWalk.Describe(walk.Element)}"));
            return declared;
        }
        if (!problems.Try(() => walk.RequireUniqueKeys())) return declared;
        var count = 0;
        foreach (var property in walk.Element.EnumerateObject())
        {
            if (++count > MaxDeclarations)
            {
                problems.Add(walk.Error($"declares more than {MaxDeclarations} primitives (the limit)"));
                break;
            }
            var item = new JsonWalk(walk.Origin, property.Value, JsonWalk.Join(walk.Path, property.Name));
            var name = property.Name;
            problems.Try(() => CheckName(item, name));
            if (Declaration(item, problems) is { } definition)
                declared.Add((name, definition));
        }
        return declared;
    }

    private static void CheckName(JsonWalk item, string name)
    {
        if (!NamePattern().IsMatch(name))
            throw item.Error($"invalid primitive name '{name}': names match [a-z][a-z0-9_]{{0,31}}");
        if (BuiltinPrimitives.Find(name) is not null || BuiltinPrimitives.IsStructural(name))
            throw item.Error($"'{name}' is a built-in primitive; declare it under another name");
    }

    /// <summary>One declaration; null (with its problems recorded) when it is wrong.</summary>
    private static PrimitiveDefinition? Declaration(JsonWalk item, ProblemList problems)
    {
        var allowed = new[] { "kind" }.Concat(Enum.GetValues<PrimitiveParameter>().Select(PrimitiveDefinition.ParameterName)).ToArray();
        if (!item.RequireObject(problems, allowed)) return null;
        if (!item.Has("kind"))
        {
            problems.Add(item.Error($"missing required field 'kind' (one of: {string.Join(", ", PrimitiveKinds.All.Select(k => k.Name))})"));
            return null;
        }
        PrimitiveKind? kind = null;
        problems.Try(() =>
        {
            var kindWalk = item.Property("kind");
            var name = kindWalk.RequireString();
            kind = PrimitiveKinds.Find(name)
                ?? throw kindWalk.Error($"unknown kind '{name}'; kinds are: {string.Join(", ", PrimitiveKinds.All.Select(k => k.Name))}");
        });
        if (kind is null) return null;

        var ok = true;
        foreach (var parameter in Enum.GetValues<PrimitiveParameter>())
        {
            var field = PrimitiveDefinition.ParameterName(parameter);
            if (item.Has(field) && !kind.Takes(parameter))
            {
                ok = false;
                problems.Add(item.Property(field).Error(
                    $"kind '{kind.Name}' takes no '{field}' (it takes: {string.Join(", ", kind.Parameters.Order().Select(PrimitiveDefinition.ParameterName))})"));
            }
        }
        if (!item.Has("kernel"))
        {
            problems.Add(item.Error($"missing required field 'kernel' (odd, {kind.MinKernel} to {PrimitiveKind.MaxKernel})"));
            return null;
        }

        int kernel = 0, dilation = PrimitiveDefinition.DefaultDilation, repeat = PrimitiveDefinition.DefaultRepeat, expand = PrimitiveDefinition.DefaultExpand;
        decimal se = 0;
        var act = Activation.Relu;
        ok &= problems.Try(() =>
        {
            var walk = item.Property("kernel");
            kernel = walk.RequireInt(kind.MinKernel, PrimitiveKind.MaxKernel);
            if (kernel % 2 == 0) throw walk.Error($"the kernel must be odd, found {kernel}");
        });
        if (kind.Takes(PrimitiveParameter.Dilation) && item.Has("dilation"))
            ok &= problems.Try(() => dilation = item.Property("dilation").RequireInt(1, 4));
        if (kind.Takes(PrimitiveParameter.Repeat) && item.Has("repeat"))
            ok &= problems.Try(() => repeat = item.Property("repeat").RequireInt(1, 2));
        if (kind.Takes(PrimitiveParameter.Expand) && item.Has("expand"))
            ok &= problems.Try(() => expand = item.Property("expand").RequireInt(1, 8));
        if (kind.Takes(PrimitiveParameter.Se) && item.Has("se"))
            ok &= problems.Try(() => se = item.Property("se").RequireDecimal(0, 1));
        if (kind.Takes(PrimitiveParameter.Act) && item.Has("act"))
            ok &= problems.Try(() =>
            {
                var walk = item.Property("act");
                var name = walk.RequireString();
                act = Activations.Parse(name)
                    ?? throw walk.Error($"unknown activation '{name}'; activations are: {string.Join(", ", Activations.All.Select(Activations.Name))}");
            });
        // A 1x1 window has no gaps to spread: dilation changes nothing there, so it is the same definition.
        if (kernel == 1) dilation = PrimitiveDefinition.DefaultDilation;
        return ok ? new PrimitiveDefinition(kind, kernel, dilation, repeat, expand, se, act) : null;
    }
}
