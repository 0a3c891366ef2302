using System.Globalization;
using System.Text;

namespace CellCompiler.Vocabulary;

/// <summary>
/// A primitive: a kind with its parameters, defaults filled in and parameters the kind does not take
/// left at their defaults, so that record equality is equality of definitions (a default spelled
/// out or left out gives the same definition).
/// </summary>
public sealed record PrimitiveDefinition(
    PrimitiveKind Kind,
    int Kernel,
    int Dilation = PrimitiveDefinition.DefaultDilation,
    int Repeat = PrimitiveDefinition.DefaultRepeat,
    int Expand = PrimitiveDefinition.DefaultExpand,
    decimal Se = 0,
    Activation Act = Activation.Relu)
{
    public const int DefaultDilation = 1;
    public const int DefaultRepeat = 1;
    public const int DefaultExpand = 6;

    public bool Trainable => Kind.Trainable;

    /// <summary>
    /// The definition as text, every parameter the kind takes spelled out in a fixed order, e.g.
    /// "sepconv(kernel=5,dilation=1,repeat=1,act=relu)". Equal exactly for equal definitions.
    /// </summary>
    public string Key
    {
        get
        {
            var sb = new StringBuilder(Kind.Name).Append('(');
            var first = true;
            foreach (var (parameter, value) in Values())
            {
                if (!first) sb.Append(',');
                first = false;
                sb.Append(ParameterName(parameter)).Append('=').Append(value);
            }
            return sb.Append(')').ToString();
        }
    }

    /// <summary>For people: "sepconv 5x5, dilation 2, 2 rounds, silu".</summary>
    public string Describe()
    {
        var parts = new List<string> { $"{Kind.Name} {Kernel}x{Kernel}" };
        if (Kind.Takes(PrimitiveParameter.Dilation) && Dilation != 1) parts.Add($"dilation {Dilation}");
        if (Kind.Takes(PrimitiveParameter.Repeat) && Repeat != 1) parts.Add($"{Repeat} rounds");
        if (Kind.Takes(PrimitiveParameter.Expand)) parts.Add($"expand {Expand}");
        if (Kind.Takes(PrimitiveParameter.Se) && Se > 0) parts.Add($"se {Se.ToString(CultureInfo.InvariantCulture)}");
        if (Kind.Takes(PrimitiveParameter.Act)) parts.Add(Activations.Name(Act));
        return string.Join(", ", parts);
    }

    /// <summary>Every parameter the kind takes with its value as written in JSON, in the contract's order.</summary>
    public IEnumerable<(PrimitiveParameter Parameter, string Value)> Values()
    {
        foreach (var parameter in Enum.GetValues<PrimitiveParameter>())
        {
            if (!Kind.Takes(parameter)) continue;
            yield return (parameter, parameter switch
            {
                PrimitiveParameter.Kernel => Kernel.ToString(CultureInfo.InvariantCulture),
                PrimitiveParameter.Dilation => Dilation.ToString(CultureInfo.InvariantCulture),
                PrimitiveParameter.Repeat => Repeat.ToString(CultureInfo.InvariantCulture),
                PrimitiveParameter.Expand => Expand.ToString(CultureInfo.InvariantCulture),
                PrimitiveParameter.Se => Se.ToString(CultureInfo.InvariantCulture),
                PrimitiveParameter.Act => Activations.Name(Act),
                _ => throw new InvalidOperationException($"unknown parameter {parameter}"),
            });
        }
    }

    /// <summary>True when the parameter holds its default (so a writer may leave it out).</summary>
    public bool IsDefault(PrimitiveParameter parameter) => parameter switch
    {
        PrimitiveParameter.Kernel => false,
        PrimitiveParameter.Dilation => Dilation == DefaultDilation,
        PrimitiveParameter.Repeat => Repeat == DefaultRepeat,
        PrimitiveParameter.Expand => Expand == DefaultExpand,
        PrimitiveParameter.Se => Se == 0,
        PrimitiveParameter.Act => Act == Activation.Relu,
        _ => throw new InvalidOperationException($"unknown parameter {parameter}"),
    };

    public static string ParameterName(PrimitiveParameter parameter) => parameter switch
    {
        PrimitiveParameter.Kernel => "kernel",
        PrimitiveParameter.Dilation => "dilation",
        PrimitiveParameter.Repeat => "repeat",
        PrimitiveParameter.Expand => "expand",
        PrimitiveParameter.Se => "se",
        PrimitiveParameter.Act => "act",
        _ => throw new InvalidOperationException($"unknown parameter {parameter}"),
    };

    public T Lower<T>(ILayerSink<T> sink, T input) => Kind.Lower(this, sink, input);

    public override string ToString() => Key;
}
