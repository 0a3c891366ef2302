using CellCompiler.Vocabulary.Kinds;

namespace CellCompiler.Vocabulary;

/// <summary>
/// Every primitive kind, listed once and ordered by name. Listed by hand rather than found by
/// reflection over the assembly, because the native (ahead-of-time, trimmed) build cannot create
/// types it only meets through reflection; a test (PrimitiveKindListTests) fails when a concrete
/// <see cref="PrimitiveKind"/> is missing here.
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
        var kinds = new PrimitiveKind[]
            {
                new ConvKind(), new DwConvKind(), new SepConvKind(), new FactorizedKind(),
                new MbConvKind(), new MaxPoolKind(), new AvgPoolKind(),
            }
            .OrderBy(k => k.Name, StringComparer.Ordinal)
            .ToList();
        var duplicate = kinds.GroupBy(k => k.Name).FirstOrDefault(g => g.Count() > 1);
        if (duplicate is not null)
            throw new InvalidOperationException($"two primitive kinds are named '{duplicate.Key}'");
        return kinds;
    }
}
