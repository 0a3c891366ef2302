using System.Reflection;

namespace CellCompiler.Vocabulary;

/// <summary>
/// Every primitive kind, found once: each concrete <see cref="PrimitiveKind"/> in this assembly, so
/// that adding a kind is adding its class and nothing else. Ordered by name.
/// </summary>
public static class PrimitiveKinds
{
    private static readonly Lazy<IReadOnlyList<PrimitiveKind>> Kinds = new(Discover);

    public static IReadOnlyList<PrimitiveKind> All => Kinds.Value;

    public static PrimitiveKind? Find(string name)
    {
        foreach (var kind in All)
            if (kind.Name == name) return kind;
        return null;
    }

    public static PrimitiveKind Get<TKind>() where TKind : PrimitiveKind =>
        All.OfType<TKind>().Single();

    private static IReadOnlyList<PrimitiveKind> Discover()
    {
        var kinds = typeof(PrimitiveKind).Assembly.GetTypes()
            .Where(t => t.IsSubclassOf(typeof(PrimitiveKind)) && !t.IsAbstract)
            .Select(t => (PrimitiveKind)Activator.CreateInstance(t)!)
            .OrderBy(k => k.Name, StringComparer.Ordinal)
            .ToList();
        var duplicate = kinds.GroupBy(k => k.Name).FirstOrDefault(g => g.Count() > 1);
        if (duplicate is not null)
            throw new InvalidOperationException($"two primitive kinds are named '{duplicate.Key}'");
        return kinds;
    }
}
