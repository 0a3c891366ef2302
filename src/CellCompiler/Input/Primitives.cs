namespace CellCompiler.Input;

/// <summary>The primitive ops a level-0 motif may use (contract section 3).</summary>
public static class Primitives
{
    public const string None = "none";
    public const string Identity = "identity";
    public const string Conv1x1 = "conv1x1";
    public const string Conv3x3 = "conv3x3";
    public const string DwConv3x3 = "dwconv3x3";
    public const string SepConv3x3 = "sepconv3x3";
    public const string MaxPool3x3 = "maxpool3x3";
    public const string AvgPool3x3 = "avgpool3x3";

    public static readonly IReadOnlyList<string> All =
        [None, Identity, Conv1x1, Conv3x3, DwConv3x3, SepConv3x3, MaxPool3x3, AvgPool3x3];

    private static readonly HashSet<string> Names = new(All, StringComparer.Ordinal);

    public static bool IsPrimitive(string op) => Names.Contains(op);

    /// <summary>Ops allowed at every level, including the ones built from motifs.</summary>
    public static bool IsStructural(string op) => op is None or Identity;
}
