using CellCompiler.Vocabulary;

namespace CellCompiler.Input;

/// <summary>
/// Names of the built-in primitives (contract section 3) and of the structural ops `identity` and
/// `none`. What each built-in is lives in <see cref="BuiltinPrimitives"/>; a genotype's own
/// declarations in its <see cref="PrimitiveTable"/>.
/// </summary>
public static class Primitives
{
    public const string None = BuiltinPrimitives.None;
    public const string Identity = BuiltinPrimitives.Identity;
    public const string Conv1x1 = "conv1x1";
    public const string Conv3x3 = "conv3x3";
    public const string DwConv3x3 = "dwconv3x3";
    public const string SepConv3x3 = "sepconv3x3";
    public const string MaxPool3x3 = "maxpool3x3";
    public const string AvgPool3x3 = "avgpool3x3";

    /// <summary>none, identity and the built-in primitives.</summary>
    public static IReadOnlyList<string> All { get; } = [None, Identity, .. BuiltinPrimitives.All.Select(p => p.Name)];

    /// <summary>A built-in name (identity and none included); declared primitives are a genotype's own.</summary>
    public static bool IsPrimitive(string op) => op is None or Identity || BuiltinPrimitives.Find(op) is not null;

    /// <summary>Ops allowed at every level, including the ones built from motifs.</summary>
    public static bool IsStructural(string op) => BuiltinPrimitives.IsStructural(op);
}
