namespace CellCompiler.Input;

/// <summary>
/// Command-line changes to a preset or skeleton file (contract section 2). Null means "keep".
/// A list of length one applies to every stage.
/// </summary>
public sealed record SkeletonOverrides(
    InputSpec? Input = null,
    int? Classes = null,
    IReadOnlyList<int>? Cells = null,
    IReadOnlyList<int>? Channels = null,
    double? WidthMultiplier = null,
    MergeMode? Merge = null,
    string? Reduction = null)
{
    public const string Origin = "command line";

    public static readonly SkeletonOverrides None = new();

    public Skeleton ApplyTo(Skeleton skeleton)
    {
        var stageCount = Channels is { Count: > 1 } ? Channels.Count
            : Cells is { Count: > 1 } ? Cells.Count
            : skeleton.Stages.Count;
        if (stageCount > Limits.MaxStages)
            throw new InputException(Origin, "", $"{stageCount} stages; the limit is {Limits.MaxStages}");
        var channels = PerStage(Channels, "--channels", stageCount, skeleton.Stages.Select(s => s.Channels).ToList());
        var cells = PerStage(Cells, "--cells", stageCount, skeleton.Stages.Select(s => s.Cells).ToList());

        if (WidthMultiplier is { } factor)
        {
            if (!double.IsFinite(factor) || factor <= 0)
                throw new InputException(Origin, "--width-mult", $"must be a positive number, found {factor}");
            channels = channels.Select(c => (int)Math.Max(1, Math.Min(Math.Round(c * factor, MidpointRounding.AwayFromZero), int.MaxValue))).ToList();
        }

        for (var t = 0; t < stageCount; t++)
        {
            if (cells[t] < 1 || cells[t] > Limits.MaxCellsPerStage)
                throw new InputException(Origin, "--cells", $"stage {t} has {cells[t]} cells; must be between 1 and {Limits.MaxCellsPerStage}");
            if (channels[t] < 1 || channels[t] > Limits.MaxChannels)
                throw new InputException(Origin, "--channels", $"stage {t} has {channels[t]} channels; must be between 1 and {Limits.MaxChannels}");
        }

        var input = Input ?? skeleton.Input;
        if (input.Channels < 1 || input.Channels > Limits.MaxInputChannels || input.Height < 1 || input.Height > Limits.MaxInputSide
            || input.Width < 1 || input.Width > Limits.MaxInputSide)
            throw new InputException(Origin, "--input",
                $"{input.Channels}x{input.Height}x{input.Width} is out of range (channels 1..{Limits.MaxInputChannels}, sides 1..{Limits.MaxInputSide})");
        var classes = Classes ?? skeleton.Classes;
        if (classes < 1 || classes > Limits.MaxClasses)
            throw new InputException(Origin, "--classes", $"must be between 1 and {Limits.MaxClasses}, found {classes}");
        var reduction = Reduction ?? skeleton.Reduction;
        if (!SkeletonReader.ReductionOps.Contains(reduction))
            throw new InputException(Origin, "--reduction", $"unsupported reduction '{reduction}'; supported: {string.Join(", ", SkeletonReader.ReductionOps)}");

        var stages = Enumerable.Range(0, stageCount).Select(t => new StageSpec(cells[t], channels[t])).ToList();
        return skeleton with
        {
            Input = input,
            Classes = classes,
            Stages = stages,
            Reduction = reduction,
            Merge = Merge ?? skeleton.Merge,
        };
    }

    private static List<int> PerStage(IReadOnlyList<int>? given, string option, int stageCount, List<int> current)
    {
        if (given is null)
        {
            if (current.Count != stageCount)
                throw new InputException(Origin, option,
                    $"the skeleton has {current.Count} stages but the overrides ask for {stageCount}; give {option} for every stage");
            return current;
        }
        if (given.Count == 1) return Enumerable.Repeat(given[0], stageCount).ToList();
        if (given.Count != stageCount)
            throw new InputException(Origin, option, $"has {given.Count} values but there are {stageCount} stages");
        return given.ToList();
    }
}
