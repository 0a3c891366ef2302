namespace CellCompiler.Input;

/// <summary>Resolves a skeleton argument: a preset name or a skeleton/1 JSON file.</summary>
public static class SkeletonReader
{
    public static readonly IReadOnlyList<string> ReductionOps = [Primitives.SepConv3x3, Primitives.Conv3x3];
    public static readonly IReadOnlyList<string> StemOps = [Primitives.Conv3x3];

    public static Skeleton Resolve(string presetOrPath)
    {
        if (SkeletonPresets.All.TryGetValue(presetOrPath, out var preset)) return preset;
        if (!File.Exists(presetOrPath) && !Directory.Exists(presetOrPath))
            throw new InputException(presetOrPath, "",
                $"not a preset ({string.Join(", ", SkeletonPresets.All.Keys)}) and no such file");
        var bytes = Io.BoundedFile.ReadAll(presetOrPath, Limits.MaxJsonBytes, "a skeleton file");
        return Parse(bytes, presetOrPath);
    }

    public static Skeleton Parse(ReadOnlyMemory<byte> utf8, string origin)
    {
        using var document = JsonWalk.ParseDocument(origin, utf8);
        var root = new JsonWalk(origin, document.RootElement, "")
            .RequireObject("format", "input", "classes", "stem", "stages", "reduction", "merge");

        var format = root.Required("format").RequireString();
        if (format != Skeleton.FormatTag)
            throw root.Property("format").Error($"unsupported format \"{format}\"; expected \"{Skeleton.FormatTag}\"");

        var inputWalk = root.Required("input").RequireObject("channels", "height", "width");
        var input = new InputSpec(
            inputWalk.Required("channels").RequireInt(1, Limits.MaxInputChannels),
            inputWalk.Required("height").RequireInt(1, Limits.MaxInputSide),
            inputWalk.Required("width").RequireInt(1, Limits.MaxInputSide));

        var classes = root.Required("classes").RequireInt(1, Limits.MaxClasses);

        var stem = new StemSpec(Primitives.Conv3x3, 1, false);
        if (root.Has("stem"))
        {
            var stemWalk = root.Property("stem").RequireObject("op", "stride", "pool");
            var op = stemWalk.Has("op") ? stemWalk.Property("op").RequireString() : Primitives.Conv3x3;
            if (!StemOps.Contains(op))
                throw stemWalk.Property("op").Error($"unsupported stem op '{op}'; supported: {string.Join(", ", StemOps)}");
            stem = new StemSpec(op,
                stemWalk.Has("stride") ? stemWalk.Property("stride").RequireInt(1, 4) : 1,
                stemWalk.Has("pool") && stemWalk.Property("pool").RequireBool());
        }

        var stagesWalk = root.Required("stages");
        var stageCount = stagesWalk.RequireArray(1, Limits.MaxStages, "stages");
        var stages = new List<StageSpec>(stageCount);
        for (var t = 0; t < stageCount; t++)
        {
            var stageWalk = stagesWalk.Item(t).RequireObject("cells", "channels");
            stages.Add(new StageSpec(
                stageWalk.Required("cells").RequireInt(1, Limits.MaxCellsPerStage),
                stageWalk.Required("channels").RequireInt(1, Limits.MaxChannels)));
        }

        var reduction = Primitives.SepConv3x3;
        if (root.Has("reduction"))
        {
            var walk = root.Property("reduction");
            reduction = walk.RequireString();
            if (!ReductionOps.Contains(reduction))
                throw walk.Error($"unsupported reduction '{reduction}'; supported: {string.Join(", ", ReductionOps)}");
        }

        var merge = MergeMode.Concat;
        if (root.Has("merge"))
        {
            var walk = root.Property("merge");
            merge = ParseMerge(walk.RequireString()) ?? throw walk.Error($"unsupported merge '{walk.Element.GetString()}'; supported: concat, sum");
        }

        return new Skeleton(input, classes, stem, stages, reduction, merge);
    }

    public static MergeMode? ParseMerge(string text) => text switch
    {
        "concat" => MergeMode.Concat,
        "sum" => MergeMode.Sum,
        _ => null,
    };
}
