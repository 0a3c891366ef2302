namespace CellCompiler.Graph;

/// <summary>
/// One op of our network representation: a typed node reading named tensors and writing one.
/// Each op knows, in its own type, its shape rule, its figures (the weights it owns and its MACs)
/// and its ONNX emission (op type, attributes, initializers), so that shape inference, figure
/// counting and emission are plain loops with no per-op switch to forget.
/// </summary>
public abstract record NetOp(string Name, IReadOnlyList<string> Inputs)
{
    /// <summary>Set only where a tensor needs a fixed name (the graph output).</summary>
    public string? OutputName { get; init; }

    /// <summary>Each op writes exactly one tensor, by default named after the op so names stay unique and traceable.</summary>
    public string Output => OutputName ?? Name;

    /// <summary>The ONNX operator this op is emitted as.</summary>
    public abstract string OnnxType { get; }

    /// <summary>The output's shape from the shapes of <see cref="Inputs"/>; a network that cannot be formed is a <see cref="CompileException"/>.</summary>
    public abstract TensorShape InferShape(InputShapes inputs);

    /// <summary>The initializers this op owns, appended to its ONNX inputs in this order.</summary>
    public virtual IReadOnlyList<WeightSpec> Weights(InputShapes inputs, TensorShape output) => [];

    /// <summary>Multiply-accumulates for one sample (contract section 4: Conv and Gemm only; every other op counts 0).</summary>
    public virtual long Macs(InputShapes inputs, TensorShape output) => 0;

    /// <summary>The ONNX node's attributes, in emission order.</summary>
    public virtual IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) => [];
}

/// <summary>The shapes of one op's inputs, looked up on demand (no list is built per op).</summary>
public readonly struct InputShapes(IReadOnlyList<string> inputs, IReadOnlyDictionary<string, TensorShape> shapes)
{
    public int Count => inputs.Count;
    public TensorShape this[int index] => shapes[inputs[index]];
    public TensorShape First => shapes[inputs[0]];
    public string NameOf(int index) => inputs[index];
}
