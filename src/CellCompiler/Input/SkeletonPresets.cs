namespace CellCompiler.Input;

/// <summary>The built-in skeletons of contract section 2, with exactly the contract's values.</summary>
public static class SkeletonPresets
{
    public static readonly IReadOnlyDictionary<string, Skeleton> All = new Dictionary<string, Skeleton>
    {
        ["proxy"] = new(new InputSpec(3, 32, 32), 10, new StemSpec("conv3x3", 1, false),
            [new StageSpec(1, 16), new StageSpec(1, 32), new StageSpec(1, 64)], "sepconv3x3", MergeMode.Concat),
        ["full"] = new(new InputSpec(3, 32, 32), 10, new StemSpec("conv3x3", 1, false),
            [new StageSpec(2, 64), new StageSpec(2, 128), new StageSpec(2, 256)], "sepconv3x3", MergeMode.Concat),
        ["full224"] = new(new InputSpec(3, 224, 224), 1000, new StemSpec("conv3x3", 2, true),
            [new StageSpec(1, 64), new StageSpec(2, 128), new StageSpec(2, 256), new StageSpec(1, 512)], "sepconv3x3", MergeMode.Concat),
    };

    public const string Default = "proxy";
}
