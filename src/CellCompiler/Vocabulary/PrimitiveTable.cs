namespace CellCompiler.Vocabulary;

/// <summary>
/// The primitives a genotype can use at level 0: the built-ins and the genotype's own declarations
/// (contract 3.1), in declaration order.
/// </summary>
public sealed class PrimitiveTable
{
    public static readonly PrimitiveTable BuiltinsOnly = new([]);

    private readonly Dictionary<string, PrimitiveDefinition> _declared;

    public PrimitiveTable(IReadOnlyList<(string Name, PrimitiveDefinition Definition)> declared)
    {
        Declared = declared;
        _declared = new Dictionary<string, PrimitiveDefinition>(StringComparer.Ordinal);
        foreach (var (name, definition) in declared)
        {
            if (BuiltinPrimitives.Find(name) is not null || BuiltinPrimitives.IsStructural(name))
                throw new ArgumentException($"'{name}' is a built-in name and cannot be declared", nameof(declared));
            if (!_declared.TryAdd(name, definition))
                throw new ArgumentException($"'{name}' is declared twice", nameof(declared));
        }
    }

    /// <summary>The genotype's own declarations, in file order.</summary>
    public IReadOnlyList<(string Name, PrimitiveDefinition Definition)> Declared { get; }

    /// <summary>The definition of a built-in or declared primitive; null for identity, none and unknown names.</summary>
    public PrimitiveDefinition? Find(string name) => _declared.GetValueOrDefault(name) ?? BuiltinPrimitives.Find(name);

    public PrimitiveDefinition Get(string name) =>
        Find(name) ?? throw new InvalidOperationException($"'{name}' is not a primitive of this genotype");

    public bool IsPrimitive(string name) => Find(name) is not null;

    public bool IsDeclared(string name) => _declared.ContainsKey(name);

    /// <summary>Every name usable at level 0 besides identity and none: built-ins first, then declarations.</summary>
    public IEnumerable<string> Names => BuiltinPrimitives.All.Select(p => p.Name).Concat(Declared.Select(p => p.Name));

    /// <summary>A table of just the declarations among <paramref name="names"/> (e.g. those a sampled genotype uses).</summary>
    public PrimitiveTable Restrict(IEnumerable<string> names)
    {
        var keep = new HashSet<string>(names, StringComparer.Ordinal);
        return new PrimitiveTable(Declared.Where(p => keep.Contains(p.Name)).ToList());
    }
}
