namespace CellCompiler.Vocabulary;

/// <summary>A parameter a primitive declaration may give (contract section 3.1).</summary>
public enum PrimitiveParameter { Kernel, Dilation, Repeat, Expand, Se, Act }

/// <summary>How a picture groups kinds: each family has its own colour and line style.</summary>
public enum KindFamily { Convolution, Depthwise, Factorized, Bottleneck, Pooling }

/// <summary>
/// A kind of primitive (contract section 3.1): which parameters it takes and in what range, how
/// it lowers to layers, and how pictures group it. Adding a kind is adding one subclass under
/// Vocabulary/Kinds and listing it in <see cref="PrimitiveKinds"/>; the reader validates its parameters,
/// the compiler, the hash, the sampler and the pictures all go through these members.
/// </summary>
public abstract class PrimitiveKind
{
    /// <summary>The `kind` value in declarations, e.g. "sepconv".</summary>
    public abstract string Name { get; }

    public abstract KindFamily Family { get; }

    /// <summary>The parameters besides `kind` this kind takes; any other is an error.</summary>
    public abstract IReadOnlySet<PrimitiveParameter> Parameters { get; }

    /// <summary>Smallest kernel (odd, up to <see cref="MaxKernel"/>): 1 for conv, 3 for every other kind.</summary>
    public virtual int MinKernel => 3;

    public const int MaxKernel = 7;

    /// <summary>False for kinds without trainable weights (pools): a cell of only such ops learns nothing.</summary>
    public virtual bool Trainable => true;

    /// <summary>Lowers one application of <paramref name="definition"/> to <paramref name="input"/>.</summary>
    public abstract T Lower<T>(PrimitiveDefinition definition, ILayerSink<T> sink, T input);

    public bool Takes(PrimitiveParameter parameter) => Parameters.Contains(parameter);

    public override string ToString() => Name;
}
