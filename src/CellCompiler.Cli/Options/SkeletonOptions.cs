using System.CommandLine;
using System.Globalization;
using CellCompiler.Input;

namespace CellCompiler.Cli.Options;

/// <summary>The skeleton choice and its overrides (contract section 2), shared by every command that compiles.</summary>
public sealed class SkeletonOptions
{
    public Option<string> Skeleton { get; } = new("--skeleton", "-s")
    {
        Description = $"Preset ({string.Join(", ", SkeletonPresets.All.Keys)}) or a skeleton/1 JSON file.",
        DefaultValueFactory = _ => SkeletonPresets.Default,
        HelpName = "PRESET|FILE",
    };

    public Option<string?> Input { get; } = new("--input") { Description = "Input size as CxHxW, e.g. 3x64x64.", HelpName = "CxHxW" };
    public Option<int?> Classes { get; } = new("--classes") { Description = "Number of output classes.", HelpName = "K" };
    public Option<string?> Cells { get; } = new("--cells") { Description = "Cells per stage, e.g. 1,2,2 (one value applies to every stage).", HelpName = "a,b,c" };
    public Option<string?> Channels { get; } = new("--channels") { Description = "Channels per stage, e.g. 16,32,64 (sets the stage count).", HelpName = "a,b,c" };
    public Option<double?> WidthMultiplier { get; } = new("--width-mult") { Description = "Multiply every stage's channels, rounded to the nearest integer, at least 1.", HelpName = "F" };
    public Option<string?> Merge { get; } = new("--merge") { Description = "How a node merges several inputs: concat or sum.", HelpName = "concat|sum" };
    public Option<string?> Reduction { get; } = new("--reduction") { Description = "Reduction between stages: sepconv3x3 or conv3x3.", HelpName = "OP" };

    public void AddTo(Command command)
    {
        foreach (var option in new Option[] { Skeleton, Input, Classes, Cells, Channels, WidthMultiplier, Merge, Reduction })
            command.Options.Add(option);
    }

    public Skeleton Resolve(ParseResult parse)
    {
        var skeleton = SkeletonReader.Resolve(parse.GetValue(Skeleton)!);
        var mergeText = parse.GetValue(Merge);
        MergeMode? merge = mergeText is null ? null
            : SkeletonReader.ParseMerge(mergeText) ?? throw Bad("--merge", $"'{mergeText}' is not a merge; use concat or sum");
        var overrides = new SkeletonOverrides(
            Input: ParseInput(parse.GetValue(Input)),
            Classes: parse.GetValue(Classes),
            Cells: ParseList(parse.GetValue(Cells), "--cells"),
            Channels: ParseList(parse.GetValue(Channels), "--channels"),
            WidthMultiplier: parse.GetValue(WidthMultiplier),
            Merge: merge,
            Reduction: parse.GetValue(Reduction));
        return overrides.ApplyTo(skeleton);
    }

    public static InputException Bad(string option, string problem) => new(SkeletonOverrides.Origin, option, problem);

    public static InputSpec? ParseInput(string? text)
    {
        if (text is null) return null;
        var parts = text.Split('x', 'X');
        if (parts.Length != 3 || !parts.All(p => int.TryParse(p, NumberStyles.None, CultureInfo.InvariantCulture, out _)))
            throw Bad("--input", $"'{text}' is not CxHxW (e.g. 3x32x32)");
        var values = parts.Select(p => int.Parse(p, CultureInfo.InvariantCulture)).ToArray();
        return new InputSpec(values[0], values[1], values[2]);
    }

    public static IReadOnlyList<int>? ParseList(string? text, string option)
    {
        if (text is null) return null;
        var parts = text.Split(',');
        var values = new List<int>(parts.Length);
        foreach (var part in parts)
        {
            if (!int.TryParse(part.Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out var value))
                throw Bad(option, $"'{text}' is not a comma-separated list of positive integers");
            values.Add(value);
        }
        return values;
    }
}
