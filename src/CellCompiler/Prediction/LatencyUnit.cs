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
    public static readonly IReadOnlyList<string> KindWords = ["primitive", "merge", "stem", "reduce", "head", "run"];

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
