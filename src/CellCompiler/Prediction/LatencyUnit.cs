using System.Globalization;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>Where a unit runs: the channel count and the height x width of the tensors it reads and writes.</summary>
public readonly record struct Site(int Channels, int Height, int Width)
{
    public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"{Channels}x{Height}x{Width}");

    public InputSpec AsInput => new(Channels, Height, Width);
}

/// <summary>
/// One entry of a latency table: a piece of a network whose CPU time is measured once and summed
/// per candidate. The granularity follows what ONNX Runtime runs (see the README's "Latency
/// prediction"): a primitive's Conv, BatchNormalization and activation fuse into one kernel, so the
/// unit is one application of a primitive definition at a site; a merge is a unit by mode and fan-in;
/// the stem, each reduction and the head are units; <see cref="RunUnit"/> holds what a run costs
/// beyond its kernels (the executor and the layout reorders at the network's ends).
/// Each unit has a <see cref="Key"/>, the text the table is indexed by, equal exactly for equal units.
/// </summary>
public abstract record LatencyUnit
{
    private protected LatencyUnit() { }

    /// <summary>The unit as the table writes it, e.g. "primitive sepconv(kernel=3,dilation=1,repeat=1,act=relu) @16x32x32".</summary>
    public abstract string Key { get; }

    /// <summary>The first word of every key: which kind of unit it is.</summary>
    public static readonly IReadOnlyList<string> KindWords = ["primitive", "merge", "stem", "reduce", "head", "run", "anchor"];

    public sealed override string ToString() => Key;
}

/// <summary>One application of a primitive (built-in or declared: known by its definition, never its name) at a site.</summary>
public sealed record PrimitiveUnit(PrimitiveDefinition Definition, Site Site) : LatencyUnit
{
    public override string Key => $"primitive {Definition.Key} @{Site}";
}

/// <summary>The merge of <see cref="FanIn"/> inputs at a node, by the skeleton's merge mode.</summary>
public sealed record MergeUnit(MergeMode Mode, int FanIn, Site Site) : LatencyUnit
{
    public override string Key => string.Create(CultureInfo.InvariantCulture, $"merge {MacroLayers.MergeName(Mode)}/{FanIn} @{Site}");
}

/// <summary>The stem of a skeleton: its op, stride and pool on the network's input, to the first stage's channels.</summary>
public sealed record StemUnit(StemSpec Stem, InputSpec Input, int OutChannels) : LatencyUnit
{
    public override string Key => string.Create(CultureInfo.InvariantCulture,
        $"stem {Stem.Op}/s{Stem.Stride}{(Stem.Pool ? "/pool" : "")} {Input.Channels}x{Input.Height}x{Input.Width}->{OutChannels}");
}

/// <summary>The reduction between two stages, from its input site to the next stage's channels.</summary>
public sealed record ReductionUnit(string Op, Site Input, int OutChannels) : LatencyUnit
{
    public override string Key => string.Create(CultureInfo.InvariantCulture, $"reduce {Op} {Input}->{OutChannels}");
}

/// <summary>The head on the last stage's output, to the classes.</summary>
public sealed record HeadUnit(Site Input, int Classes) : LatencyUnit
{
    public override string Key => string.Create(CultureInfo.InvariantCulture, $"head {Input}->{Classes}");
}

/// <summary>What one run costs beyond the kernels of its units: the executor's per-run work and the reorders at the network's ends.</summary>
public sealed record RunUnit : LatencyUnit
{
    public static readonly RunUnit Instance = new();

    public override string Key => "run";
}

/// <summary>
/// The reference probe every measurement is timed beside (<see cref="UnitMeter"/>): a chain of
/// <see cref="Copies"/> conv3x3 at a fixed site, the same for every skeleton. Its entry is the time it
/// took when the table was first made; no candidate contains it. A virtual machine's speed moved by
/// 25 to 40% within a minute here, so each unit is scaled by how much faster or slower the anchor ran
/// at that moment than at the table's making, which keeps every entry on one scale.
/// </summary>
public sealed record AnchorUnit : LatencyUnit
{
    public static readonly AnchorUnit Instance = new();

    public const int Copies = 4;

    public static readonly Site At = new(32, 16, 16);

    public override string Key => string.Create(CultureInfo.InvariantCulture, $"anchor conv3x3/{Copies} @{At}");
}
