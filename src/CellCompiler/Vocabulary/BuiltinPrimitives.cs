using CellCompiler.Vocabulary.Kinds;

namespace CellCompiler.Vocabulary;

/// <summary>The built-in primitives of contract section 3, each the declaration contract 3.1 says it is.</summary>
public static class BuiltinPrimitives
{
    public const string None = "none";
    public const string Identity = "identity";

    /// <summary>Name and definition, in the contract's order.</summary>
    public static readonly IReadOnlyList<(string Name, PrimitiveDefinition Definition)> All =
    [
        (Input.Primitives.Conv1x1, new(PrimitiveKinds.Get<ConvKind>(), 1)),
        (Input.Primitives.Conv3x3, new(PrimitiveKinds.Get<ConvKind>(), 3)),
        (Input.Primitives.DwConv3x3, new(PrimitiveKinds.Get<DwConvKind>(), 3)),
        (Input.Primitives.SepConv3x3, new(PrimitiveKinds.Get<SepConvKind>(), 3)),
        (Input.Primitives.MaxPool3x3, new(PrimitiveKinds.Get<MaxPoolKind>(), 3)),
        (Input.Primitives.AvgPool3x3, new(PrimitiveKinds.Get<AvgPoolKind>(), 3)),
    ];

    private static readonly Dictionary<string, PrimitiveDefinition> ByName =
        All.ToDictionary(p => p.Name, p => p.Definition, StringComparer.Ordinal);

    private static readonly Dictionary<PrimitiveDefinition, string> ByDefinition =
        All.ToDictionary(p => p.Definition, p => p.Name);

    public static PrimitiveDefinition? Find(string name) => ByName.GetValueOrDefault(name);

    /// <summary>The built-in name of a definition, when one is spelled that way.</summary>
    public static string? NameOf(PrimitiveDefinition definition) => ByDefinition.GetValueOrDefault(definition);

    /// <summary>`identity` and `none`: allowed at every level, neither a primitive with layers nor a motif.</summary>
    public static bool IsStructural(string op) => op is None or Identity;
}
