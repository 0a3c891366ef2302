using CellCompiler.OnnxFormat;

namespace CellCompiler.Inspection;

/// <summary>
/// One node as the shape rules and value folding see it: its inputs' shapes and folded values,
/// its attributes, and the reason (if any) a rule gave for not knowing an output.
/// </summary>
internal sealed class NodeContext(NodeProto node, ShapeTable table)
{
    public NodeProto Node => node;

    public string Op => node.OpType;

    public int Inputs => node.Input.Count;

    public int Outputs => node.Output.Count;

    /// <summary>Why a rule could not give an output's shape; the first reason given wins.</summary>
    public string? Why { get; private set; }

    /// <summary>True if input <paramref name="i"/> is given (an empty name is an omitted optional input).</summary>
    public bool Has(int i) => i < node.Input.Count && node.Input[i].Length > 0;

    public string InputName(int i) => i < node.Input.Count ? node.Input[i] : "";

    public Dim[]? In(int i) => Has(i) ? table[node.Input[i]] : null;

    public FoldedValue? Values(int i) => Has(i) ? table.Values(node.Input[i]) : null;

    /// <summary>Where input i's shape was lost, if it was.</summary>
    public ShapeGap? Gap(int i) => Has(i) ? table.Gap(node.Input[i]) : null;

    /// <summary>Input i's values when every element is a number.</summary>
    public long[]? Numbers(int i) => Values(i)?.Numbers();

    public long Int(string name, long fallback) => OnnxAttributes.Int(node, name, fallback);

    public long[]? Ints(string name) => OnnxAttributes.Ints(node, name);

    public string String(string name, string fallback) => OnnxAttributes.String(node, name, fallback);

    public bool HasAttribute(string name) => OnnxAttributes.Find(node, name) is not null;

    /// <summary>Records why an output's shape is not known and returns null (for use as a rule's result).</summary>
    public Dim[]? Unknown(string why)
    {
        Why ??= why;
        return null;
    }

    /// <summary>Integer values an input must supply (axes, pads, sizes); records the reason when they cannot be folded.</summary>
    public long[]? RequireNumbers(int i, string role)
    {
        if (Numbers(i) is { } numbers) return numbers;
        Unknown($"its {role} (input {i + 1}, '{InputName(i)}') are computed at run time from values cellc cannot fold");
        return null;
    }

    /// <summary>An axis made non-negative against <paramref name="rank"/>, or null if out of range.</summary>
    public static int? Axis(long axis, int rank)
    {
        if (axis < 0) axis += rank;
        return axis >= 0 && axis < rank ? (int)axis : null;
    }

    /// <summary>Axes made non-negative; null if any is out of range or repeated.</summary>
    public static int[]? Axes(long[] axes, int rank)
    {
        var normalized = new int[axes.Length];
        for (var i = 0; i < axes.Length; i++)
        {
            if (Axis(axes[i], rank) is not { } a || normalized.AsSpan(0, i).Contains(a)) return null;
            normalized[i] = a;
        }
        return normalized;
    }
}
