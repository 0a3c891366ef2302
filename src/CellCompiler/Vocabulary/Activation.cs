namespace CellCompiler.Vocabulary;

/// <summary>The activations a primitive may end in (contract section 3.1).</summary>
public enum Activation { Relu, Relu6, Silu, HardSwish, None }

public static class Activations
{
    public static readonly IReadOnlyList<Activation> All = [Activation.Relu, Activation.Relu6, Activation.Silu, Activation.HardSwish, Activation.None];

    /// <summary>The name in genotype files, also the name of the activation's output node.</summary>
    public static string Name(Activation act) => act switch
    {
        Activation.Relu => "relu",
        Activation.Relu6 => "relu6",
        Activation.Silu => "silu",
        Activation.HardSwish => "hardswish",
        Activation.None => "none",
        _ => throw new InvalidOperationException($"unknown activation {act}"),
    };

    public static Activation? Parse(string name)
    {
        foreach (var act in All)
            if (Name(act) == name) return act;
        return null;
    }

    /// <summary>The squeeze-excitation's inner activation A': A, except that `none` gives relu there (contract 3.1).</summary>
    public static Activation Inner(Activation act) => act == Activation.None ? Activation.Relu : act;
}
