using System.Globalization;

namespace CellCompiler.Inspection;

/// <summary>
/// One dimension of a tensor shape as an ONNX model states it: a number (dim_value), a name
/// (dim_param, e.g. the batch "N"), or nothing at all (unknown).
/// </summary>
public readonly record struct Dim(long? Value, string? Param)
{
    public static readonly Dim Unknown = new(null, null);

    public static Dim Of(long value) => new(value, null);

    public static Dim Named(string param) => new(null, param);

    public bool IsKnown => Value.HasValue;

    public override string ToString() =>
        Value?.ToString(CultureInfo.InvariantCulture) ?? (string.IsNullOrEmpty(Param) ? "?" : Param);
}

/// <summary>A graph input or output: name, element type and shape (null dims: the rank is not stated).</summary>
public sealed record TensorInfo(string Name, string ElemType, IReadOnlyList<Dim>? Dims)
{
    public string ShapeText => Dims is null ? "(shape not stated)" : "[" + string.Join(", ", Dims) + "]";
}

public sealed record OpsetImport(string Domain, long Version)
{
    /// <summary>The domain as users know it: the default domain "" is "ai.onnx".</summary>
    public string DisplayDomain => Domain.Length == 0 ? "ai.onnx" : Domain;
}

/// <summary>Where a tensor's shape was lost: a node (its name, or its position when unnamed) or a graph input, and why.</summary>
public sealed record ShapeGap(string Node, string OpType, string Reason);

/// <summary>A place where shapes were lost, and how many computed tensors have unknown shapes because of it.</summary>
public sealed record UnknownShapes(ShapeGap Gap, int Tensors);

/// <summary>A node whose MACs the section-4 rules would count but whose shapes do not allow it; <paramref name="ShapeLostAt"/> is where the missing shape was lost.</summary>
public sealed record UncountedNode(string Node, string OpType, string Reason, ShapeGap? ShapeLostAt = null);

/// <summary>Where the shapes of the tensors that nodes produce came from.</summary>
/// <param name="Declared">Fully stated by the model (value_info, graph outputs).</param>
/// <param name="Inferred">Not (fully) stated, completed by our own propagation along the graph.</param>
/// <param name="Unknown">Neither: the rank or a dimension beyond the first stays unknown or symbolic.</param>
public sealed record ShapeCoverage(int Declared, int Inferred, int Unknown);

/// <summary>
/// What `cellc inspect` reports about any ONNX model. Figures follow contract section 4 applied
/// to any model: params are initializer elements except BatchNormalization running statistics
/// (inputs 3 and 4), which are buffers, and integer constants; MACs are per sample (the first
/// dimension of activations is the batch) for Conv and Gemm only, as section 4 counts them.
/// </summary>
public sealed record ModelInspection
{
    public required long ModelBytes { get; init; }
    public required long IrVersion { get; init; }
    public required string ProducerName { get; init; }
    public required string ProducerVersion { get; init; }
    public required string Domain { get; init; }
    public required long ModelVersion { get; init; }
    public required string GraphName { get; init; }
    public required IReadOnlyList<OpsetImport> OpsetImports { get; init; }

    /// <summary>Graph inputs that are not initializers (the tensors a caller feeds).</summary>
    public required IReadOnlyList<TensorInfo> Inputs { get; init; }
    public required IReadOnlyList<TensorInfo> Outputs { get; init; }

    /// <summary>Initializers also listed as graph inputs (older exports; defaults a caller may override).</summary>
    public required int InitializersAsInputs { get; init; }

    public required int NodeCount { get; init; }

    /// <summary>Node count by op type; "domain:op_type" for ops outside the default ONNX domain.</summary>
    public required IReadOnlyDictionary<string, int> OpCounts { get; init; }

    /// <summary>Nodes inside subgraphs (If/Loop/Scan bodies): not in the op counts, params or MACs.</summary>
    public required int SubgraphNodes { get; init; }

    public required int InitializerCount { get; init; }

    /// <summary>Elements of every initializer, whatever its role.</summary>
    public required long InitializerElements { get; init; }

    /// <summary>Trainable elements: initializers that are neither buffers nor integer constants.</summary>
    public required long Params { get; init; }

    /// <summary>Elements of BatchNormalization running mean and variance (inputs 3 and 4).</summary>
    public required long Buffers { get; init; }

    /// <summary>Elements of int64 and bool initializers (shapes, axes, indices): never trainable, not params.</summary>
    public required long ConstantElements { get; init; }

    /// <summary>Initializers whose data lives in external files (their elements are counted from dims).</summary>
    public required int ExternalDataInitializers { get; init; }

    /// <summary>MACs per sample, or null when some node's MACs cannot be computed (see <see cref="MacsNotComputed"/>).</summary>
    public required long? Macs { get; init; }

    /// <summary>The total over the nodes whose MACs could be computed.</summary>
    public required long MacsKnown { get; init; }

    public required IReadOnlyList<UncountedNode> MacsNotComputed { get; init; }

    /// <summary>Ops present that multiply-accumulate but that the section-4 rules do not count (e.g. ConvTranspose, LSTM).</summary>
    public required IReadOnlyDictionary<string, int> OpsOutsideMacRules { get; init; }

    public required ShapeCoverage Shapes { get; init; }

    /// <summary>Where the shapes counted unknown in <see cref="Shapes"/> were lost, in graph order.</summary>
    public required IReadOnlyList<UnknownShapes> UnknownShapeSources { get; init; }

    /// <summary>metadata_props in file order (a repeated key keeps its last value).</summary>
    public required IReadOnlyDictionary<string, string> Metadata { get; init; }

    /// <summary>Short remarks a reader should know about the figures (external data, subgraphs, uncounted ops).</summary>
    public required IReadOnlyList<string> Notes { get; init; }
}
