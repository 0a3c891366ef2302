using CellCompiler.OnnxFormat;

namespace CellCompiler.Inspection;

/// <summary>
/// The shapes known for a graph's tensors after propagation, and the values of small integer
/// tensors (shapes, axes) met on the way. A value is a <see cref="Dim"/> so that it can be symbolic:
/// Shape of an [N, 64, 4, 4] tensor is [N, 64, 4, 4], which lets Reshape([Shape[0], -1]) keep the batch.
/// </summary>
internal sealed class ShapeTable
{
    private readonly Dictionary<string, Dim[]> _shapes = new(StringComparer.Ordinal);
    private readonly Dictionary<string, Dim[]> _values = new(StringComparer.Ordinal);

    /// <summary>The tensor's shape, or null when not even its rank is known.</summary>
    public Dim[]? this[string name] => name.Length > 0 && _shapes.TryGetValue(name, out var s) ? s : null;

    public Dim[]? Values(string name) => name.Length > 0 && _values.TryGetValue(name, out var v) ? v : null;

    public void Set(string name, Dim[]? shape)
    {
        if (name.Length == 0) return;
        if (shape is null) _shapes.Remove(name);
        else _shapes[name] = shape;
    }

    public void SetValues(string name, long[]? values) => SetValues(name, values?.Select(Dim.Of).ToArray());

    public void SetValues(string name, Dim[]? values)
    {
        if (name.Length > 0 && values is not null) _values[name] = values;
    }

    /// <summary>Rank known and every dimension after the first (the batch) a number.</summary>
    public static bool IsComplete(Dim[]? shape) => shape is not null && shape.Skip(1).All(d => d.IsKnown);
}

/// <summary>
/// Completes the shapes a model states (inputs, outputs, value_info, initializers) by propagating
/// them along the graph for common ops, the way ONNX shape inference would: Conv, pools, global
/// pools, element-wise and broadcasting ops, BatchNormalization, Flatten, Gemm, MatMul, Concat,
/// Reshape, Transpose, Squeeze, Unsqueeze, reductions, Identity, Constant, Shape and Gather; the
/// values of small integer tensors follow Shape, Gather, Slice, Unsqueeze, Squeeze, Concat, Cast and
/// Identity, so that the Reshape of a PyTorch `x.view(x.size(0), -1)` resolves.
/// Other ops leave their outputs as the model states them (often unknown). A shape the model
/// states always wins over an inferred one, dimension by dimension.
/// </summary>
internal static class ShapePropagation
{
    public static (ShapeTable Table, ShapeCoverage Coverage) Run(GraphProto graph)
    {
        var table = new ShapeTable();
        var declared = new Dictionary<string, Dim[]>(StringComparer.Ordinal);
        foreach (var info in graph.Input.Concat(graph.ValueInfo).Concat(graph.Output))
            if (DeclaredShape(info) is { } shape)
                declared[info.Name] = shape;
        foreach (var (name, shape) in declared)
            table.Set(name, shape);
        foreach (var initializer in graph.Initializer)
        {
            table.Set(initializer.Name, initializer.Dims.Select(Dim.Of).ToArray());
            table.SetValues(initializer.Name, OnnxAttributes.IntegerValues(initializer));
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        int fromModel = 0, inferred = 0, unknown = 0;
        foreach (var node in graph.Node)
        {
            Dim[]?[] outputs;
            try { outputs = Infer(node, table); }
            catch (Exception e) when (e is OverflowException or ArgumentException or IndexOutOfRangeException or InvalidOperationException)
            {
                outputs = [];   // a malformed node: its outputs keep what the model states
            }
            for (var i = 0; i < node.Output.Count; i++)
            {
                var name = node.Output[i];
                if (name.Length == 0) continue;
                var stated = declared.GetValueOrDefault(name);
                var merged = Merge(stated, i < outputs.Length ? outputs[i] : null);
                table.Set(name, merged);
                if (!seen.Add(name)) continue;
                if (ShapeTable.IsComplete(stated)) fromModel++;
                else if (ShapeTable.IsComplete(merged)) inferred++;
                else unknown++;
            }
        }
        return (table, new ShapeCoverage(fromModel, inferred, unknown));
    }

    /// <summary>The shape a value_info states, or null when it states no tensor shape.</summary>
    public static Dim[]? DeclaredShape(ValueInfoProto info)
    {
        if (info.Type?.ValueCase != TypeProto.ValueOneofCase.TensorType || info.Type.TensorType.Shape is not { } shape)
            return null;
        return shape.Dim.Select(d => d.ValueCase switch
        {
            TensorShapeProto.Types.Dimension.ValueOneofCase.DimValue => Dim.Of(d.DimValue),
            TensorShapeProto.Types.Dimension.ValueOneofCase.DimParam => Dim.Named(d.DimParam),
            _ => Dim.Unknown,
        }).ToArray();
    }

    /// <summary>Stated dimensions win; inferred ones fill the gaps. Different ranks: the model's statement stands.</summary>
    private static Dim[]? Merge(Dim[]? stated, Dim[]? inferred)
    {
        if (stated is null) return inferred;
        if (inferred is null || inferred.Length != stated.Length) return stated;
        var merged = new Dim[stated.Length];
        for (var i = 0; i < stated.Length; i++)
            merged[i] = stated[i].IsKnown || (!inferred[i].IsKnown && !string.IsNullOrEmpty(stated[i].Param)) ? stated[i] : inferred[i];
        return merged;
    }

    private static readonly HashSet<string> SameShapeOps = new(StringComparer.Ordinal)
    {
        "Relu", "LeakyRelu", "Sigmoid", "Tanh", "HardSigmoid", "HardSwish", "Elu", "Selu", "Celu", "Softplus",
        "Softsign", "Gelu", "Mish", "ThresholdedRelu", "Erf", "Exp", "Log", "Sqrt", "Reciprocal", "Neg", "Abs",
        "Floor", "Ceil", "Round", "Sign", "Sin", "Cos", "Not", "IsNaN", "IsInf", "Cast", "CastLike", "Clip",
        "Dropout", "Identity", "BatchNormalization", "InstanceNormalization", "LayerNormalization",
        "GroupNormalization", "LpNormalization", "LRN", "Softmax", "LogSoftmax", "Hardmax", "Shrink",
        "QuantizeLinear", "DequantizeLinear",
    };

    private static readonly HashSet<string> BroadcastOps = new(StringComparer.Ordinal)
    {
        "Add", "Sub", "Mul", "Div", "Pow", "Mod", "Sum", "Max", "Min", "Mean", "Where", "PRelu",
        "Equal", "Less", "Greater", "LessOrEqual", "GreaterOrEqual", "And", "Or", "Xor", "BitShift",
    };

    private static readonly HashSet<string> ReduceOps = new(StringComparer.Ordinal)
    {
        "ReduceMean", "ReduceSum", "ReduceMax", "ReduceMin", "ReduceProd", "ReduceL1", "ReduceL2",
        "ReduceLogSum", "ReduceLogSumExp", "ReduceSumSquare",
    };

    private static Dim[]?[] Infer(NodeProto node, ShapeTable table)
    {
        if (node.Domain is not ("" or "ai.onnx")) return [];
        Dim[]? In(int i) => i < node.Input.Count ? table[node.Input[i]] : null;
        Dim[]? Values(int i) => i < node.Input.Count ? table.Values(node.Input[i]) : null;
        long[]? Numbers(int i) => Values(i) is { } v && v.All(d => d.IsKnown) ? v.Select(d => d.Value!.Value).ToArray() : null;
        var op = node.OpType;

        if (node.Output.Count > 0 && IntegerValues(node, op, Values, Numbers) is { } values)
            table.SetValues(node.Output[0], values);
        if (op == "Shape" && node.Output.Count > 0 && In(0) is { } shapeOf && ShapeRange(node, shapeOf.Length) is var (first, last))
            table.SetValues(node.Output[0], shapeOf[first..last]);
        if (SameShapeOps.Contains(op))
        {
            var x = In(0);
            // Training-mode BatchNormalization's extra outputs (running and saved statistics) are [C]; Dropout's mask is X's shape.
            if (op == "BatchNormalization")
                return [x, .. Enumerable.Repeat(x is { Length: >= 2 } ? new[] { x[1] } : null, 4)];
            return [x, op == "Dropout" ? x : null];
        }
        if (BroadcastOps.Contains(op))
        {
            Dim[]? result = In(0);
            for (var i = 1; i < node.Input.Count && result is not null; i++)
                result = Broadcast(result, In(i));
            return [result];
        }
        if (ReduceOps.Contains(op)) return [Reduce(node, In(0), OnnxAttributes.Ints(node, "axes") ?? Numbers(1))];

        switch (op)
        {
            case "Conv":
            {
                var (x, w) = (In(0), In(1));
                if (x is null || x.Length < 3) return [];
                var kernel = OnnxAttributes.Ints(node, "kernel_shape")
                    ?? (w is not null && w.Length == x.Length && w.Skip(2).All(d => d.IsKnown) ? w.Skip(2).Select(d => d.Value!.Value).ToArray() : null);
                var channels = w is { Length: > 0 } ? w[0] : Dim.Unknown;
                return [Windowed(node, x, channels, kernel, ceilMode: false)];
            }
            case "MaxPool" or "AveragePool" or "LpPool":
            {
                var x = In(0);
                if (x is null || x.Length < 3) return [];
                var y = Windowed(node, x, x[1], OnnxAttributes.Ints(node, "kernel_shape"), OnnxAttributes.Int(node, "ceil_mode", 0) != 0);
                return [y, y];
            }
            case "GlobalAveragePool" or "GlobalMaxPool" or "GlobalLpPool":
            {
                var x = In(0);
                if (x is null || x.Length < 2) return [];
                return [[x[0], x[1], .. Enumerable.Repeat(Dim.Of(1), x.Length - 2)]];
            }
            case "Flatten":
            {
                var x = In(0);
                if (x is null) return [];
                var axis = OnnxAttributes.Int(node, "axis", 1);
                if (axis < 0) axis += x.Length;
                if (axis < 0 || axis > x.Length) return [];
                return [[Product(x[..(int)axis]), Product(x[(int)axis..])]];
            }
            case "Gemm":
            {
                var (a, b) = (In(0), In(1));
                var m = a is { Length: 2 } ? a[OnnxAttributes.Int(node, "transA", 0) != 0 ? 1 : 0] : Dim.Unknown;
                var n = b is { Length: 2 } ? b[OnnxAttributes.Int(node, "transB", 0) != 0 ? 0 : 1] : Dim.Unknown;
                return [[m, n]];
            }
            case "MatMul":
                return [MatMul(In(0), In(1))];
            case "Concat":
            {
                var inputs = Enumerable.Range(0, node.Input.Count).Select(In).ToList();
                if (inputs.Count == 0 || inputs.Any(s => s is null) || inputs.Select(s => s!.Length).Distinct().Count() != 1) return [];
                var rank = inputs[0]!.Length;
                var axis = OnnxAttributes.Int(node, "axis", 1);
                if (axis < 0) axis += rank;
                if (axis < 0 || axis >= rank) return [];
                var result = new Dim[rank];
                for (var i = 0; i < rank; i++)
                {
                    var dims = inputs.Select(s => s![i]).ToList();
                    result[i] = i == axis
                        ? dims.All(d => d.IsKnown) ? Dim.Of(dims.Sum(d => checked(d.Value!.Value))) : Dim.Unknown
                        : dims.FirstOrDefault(d => d.IsKnown, dims[0]);
                }
                return [result];
            }
            case "Reshape":
                return [Reshape(In(0), Values(1), OnnxAttributes.Int(node, "allowzero", 0) != 0)];
            case "Transpose":
            {
                var x = In(0);
                if (x is null) return [];
                var perm = OnnxAttributes.Ints(node, "perm") ?? Enumerable.Range(0, x.Length).Reverse().Select(i => (long)i).ToArray();
                if (perm.Length != x.Length || perm.Any(p => p < 0 || p >= x.Length)) return [];
                return [perm.Select(p => x[p]).ToArray()];
            }
            case "Squeeze":
                return [Squeeze(In(0), OnnxAttributes.Ints(node, "axes") ?? Numbers(1))];
            case "Unsqueeze":
                return [Unsqueeze(In(0), OnnxAttributes.Ints(node, "axes") ?? Numbers(1))];
            case "Shape":
                return [In(0) is { } shaped && ShapeRange(node, shaped.Length) is var (start, end) ? [Dim.Of(end - start)] : null];
            case "Gather":
            {
                var (data, indices) = (In(0), In(1));
                if (data is null || indices is null) return [];
                var axis = OnnxAttributes.Int(node, "axis", 0);
                if (axis < 0) axis += data.Length;
                if (axis < 0 || axis >= data.Length) return [];
                return [[.. data[..(int)axis], .. indices, .. data[((int)axis + 1)..]]];
            }
            case "Constant":
                return [Constant(node, table)];
            default:
                return [];
        }
    }

    /// <summary>The [start, end) range of dimensions that Shape returns (opset 15 start and end attributes).</summary>
    private static (int Start, int End)? ShapeRange(NodeProto node, int rank)
    {
        long Clamp(long v) => Math.Clamp(v < 0 ? v + rank : v, 0, rank);
        var start = Clamp(OnnxAttributes.Int(node, "start", 0));
        var end = Clamp(OnnxAttributes.Int(node, "end", rank));
        return end >= start ? ((int)start, (int)end) : null;
    }

    /// <summary>
    /// The values of a small integer tensor a node makes, when its inputs' values are known: the
    /// ops that build shapes in exported graphs (Shape -> Gather -> Unsqueeze -> Concat -> Reshape).
    /// </summary>
    private static Dim[]? IntegerValues(NodeProto node, string op, Func<int, Dim[]?> values, Func<int, long[]?> numbers)
    {
        switch (op)
        {
            case "Identity" or "Cast" or "Squeeze" or "Unsqueeze":
                // 0-D and 1-D integer tensors keep their values in order when squeezed or unsqueezed.
                return values(0);
            case "Concat":
            {
                var parts = new List<Dim>();
                for (var i = 0; i < node.Input.Count; i++)
                    if (values(i) is { } part) parts.AddRange(part);
                    else return null;
                return parts.ToArray();
            }
            case "Gather":
            {
                if (values(0) is not { } data || numbers(1) is not { } indices || OnnxAttributes.Int(node, "axis", 0) != 0) return null;
                var picked = new Dim[indices.Length];
                for (var i = 0; i < indices.Length; i++)
                {
                    var index = indices[i] < 0 ? indices[i] + data.Length : indices[i];
                    if (index < 0 || index >= data.Length) return null;
                    picked[i] = data[index];
                }
                return picked;
            }
            case "Slice":
            {
                // 1-D values, one axis, step 1 (opset 10 and later: starts and ends are inputs).
                if (values(0) is not { } data || numbers(1) is not [var start] || numbers(2) is not [var end]) return null;
                if (node.Input.Count > 3 && node.Input[3].Length > 0 && numbers(3) is not [0 or -1]) return null;
                if (node.Input.Count > 4 && node.Input[4].Length > 0 && numbers(4) is not [1]) return null;
                long Clamp(long v) => Math.Clamp(v < 0 ? v + data.Length : v, 0, data.Length);
                var (from, to) = (Clamp(start), Clamp(end));
                return to >= from ? data[(int)from..(int)to] : [];
            }
            default:
                return null;
        }
    }

    /// <summary>
    /// Output of Conv and pooling: [N, channels, spatial...] with the ONNX output-size rules
    /// (explicit pads, or auto_pad SAME_UPPER/SAME_LOWER/VALID; ceil_mode for pools).
    /// </summary>
    private static Dim[]? Windowed(NodeProto node, Dim[] x, Dim channels, long[]? kernel, bool ceilMode)
    {
        var spatial = x.Length - 2;
        if (kernel is null || kernel.Length != spatial) return null;
        var strides = OnnxAttributes.Ints(node, "strides") is { Length: > 0 } s ? s : Enumerable.Repeat(1L, spatial).ToArray();
        var dilations = OnnxAttributes.Ints(node, "dilations") is { Length: > 0 } d ? d : Enumerable.Repeat(1L, spatial).ToArray();
        var pads = OnnxAttributes.Ints(node, "pads") is { Length: > 0 } p ? p : new long[2 * spatial];
        var autoPad = OnnxAttributes.String(node, "auto_pad", "NOTSET");
        if (strides.Length != spatial || dilations.Length != spatial || pads.Length != 2 * spatial) return null;

        var result = new Dim[x.Length];
        result[0] = x[0];
        result[1] = channels;
        for (var i = 0; i < spatial; i++)
        {
            var input = x[2 + i];
            if (!input.IsKnown || strides[i] <= 0 || kernel[i] <= 0 || dilations[i] <= 0) { result[2 + i] = Dim.Unknown; continue; }
            var size = input.Value!.Value;
            var effectiveKernel = checked((kernel[i] - 1) * dilations[i] + 1);
            long output;
            switch (autoPad)
            {
                case "SAME_UPPER" or "SAME_LOWER":
                    output = CeilDiv(size, strides[i]);
                    break;
                case "VALID":
                    output = size < effectiveKernel ? -1 : (size - effectiveKernel) / strides[i] + 1;
                    break;
                default:
                {
                    var span = checked(size + pads[i] + pads[spatial + i] - effectiveKernel);
                    if (span < 0) { output = -1; break; }
                    output = (ceilMode ? CeilDiv(span, strides[i]) : span / strides[i]) + 1;
                    // The last window must start inside the input or its leading padding (ONNX and PyTorch).
                    if (ceilMode && (output - 1) * strides[i] >= size + pads[i]) output--;
                    break;
                }
            }
            result[2 + i] = output > 0 ? Dim.Of(output) : Dim.Unknown;
        }
        return result;
    }

    private static long CeilDiv(long a, long b) => (a + b - 1) / b;

    /// <summary>Product of dimensions: a number when all are known; a lone symbolic dimension times 1s stays itself (the batch in Flatten).</summary>
    private static Dim Product(IReadOnlyList<Dim> dims)
    {
        long known = 1;
        Dim? symbolic = null;
        foreach (var d in dims)
        {
            if (d.IsKnown) known = checked(known * d.Value!.Value);
            else if (symbolic is null) symbolic = d;
            else return Dim.Unknown;
        }
        if (symbolic is null) return Dim.Of(known);
        return known == 1 ? symbolic.Value : Dim.Unknown;
    }

    /// <summary>Multidirectional (NumPy) broadcasting.</summary>
    private static Dim[]? Broadcast(Dim[] a, Dim[]? b)
    {
        if (b is null) return null;
        var rank = Math.Max(a.Length, b.Length);
        var result = new Dim[rank];
        for (var i = 1; i <= rank; i++)
        {
            Dim? da = i <= a.Length ? a[^i] : null, db = i <= b.Length ? b[^i] : null;
            result[^i] = (da, db) switch
            {
                (null, { } y) => y,
                ({ } x, null) => x,
                ({ } x, { } y) when x.Value == 1 => y,
                ({ } x, { } y) when y.Value == 1 => x,
                ({ } x, _) when x.IsKnown => x,
                (_, { } y) when y.IsKnown => y,
                ({ } x, { } y) when !string.IsNullOrEmpty(x.Param) && x.Param == y.Param => x,
                _ => Dim.Unknown,
            };
        }
        return result;
    }

    private static Dim[]? MatMul(Dim[]? a, Dim[]? b)
    {
        if (a is null || b is null || a.Length == 0 || b.Length == 0) return null;
        var batch = Broadcast(a.Length > 2 ? a[..^2] : [], b.Length > 2 ? b[..^2] : [])!;
        var result = new List<Dim>(batch);
        if (a.Length >= 2) result.Add(a[^2]);
        if (b.Length >= 2) result.Add(b[^1]);
        return result.ToArray();
    }

    /// <summary>
    /// Reshape to a shape whose values are known (constants, or sizes read from other shapes): 0 copies
    /// the input's dimension (unless allowzero), -1 takes the remaining elements, which needs every
    /// input dimension known except symbolic ones that the target keeps (the batch, usually).
    /// </summary>
    private static Dim[]? Reshape(Dim[]? x, Dim[]? target, bool allowZero)
    {
        if (target is null) return null;
        var result = new Dim[target.Length];
        var inferIndex = -1;
        for (var i = 0; i < target.Length; i++)
        {
            if (target[i].Value is not { } t) result[i] = target[i];   // a symbolic size taken from another tensor's shape
            else if (t == 0 && !allowZero) result[i] = x is not null && i < x.Length ? x[i] : Dim.Unknown;
            else if (t == -1 && inferIndex < 0) { inferIndex = i; result[i] = Dim.Unknown; }
            else if (t >= 0) result[i] = Dim.Of(t);
            else return null;
        }
        if (inferIndex < 0 || x is null) return result;

        // Elements of the input over the elements of the other output dims; symbolic dims must cancel exactly.
        long inKnown = 1, outKnown = 1;
        var inSymbols = new List<string>();
        var outSymbols = new List<string>();
        foreach (var d in x)
        {
            if (d.IsKnown) inKnown = checked(inKnown * d.Value!.Value);
            else if (!string.IsNullOrEmpty(d.Param)) inSymbols.Add(d.Param);
            else return result;
        }
        for (var i = 0; i < result.Length; i++)
        {
            if (i == inferIndex) continue;
            if (result[i].IsKnown) outKnown = checked(outKnown * result[i].Value!.Value);
            else if (!string.IsNullOrEmpty(result[i].Param)) outSymbols.Add(result[i].Param!);
            else return result;
        }
        inSymbols.Sort(StringComparer.Ordinal);
        outSymbols.Sort(StringComparer.Ordinal);
        if (inSymbols.SequenceEqual(outSymbols) && outKnown > 0 && inKnown % outKnown == 0)
            result[inferIndex] = Dim.Of(inKnown / outKnown);
        return result;
    }

    private static long[]? Normalize(long[] axes, int rank)
    {
        var normalized = axes.Select(a => a < 0 ? a + rank : a).ToArray();
        return normalized.All(a => a >= 0 && a < rank) && normalized.Distinct().Count() == normalized.Length ? normalized : null;
    }

    private static Dim[]? Squeeze(Dim[]? x, long[]? axes)
    {
        if (x is null) return null;
        if (axes is null || axes.Length == 0)
            return x.All(d => d.IsKnown) ? x.Where(d => d.Value != 1).ToArray() : null;
        if (Normalize(axes, x.Length) is not { } remove) return null;
        return x.Where((_, i) => !remove.Contains(i)).ToArray();
    }

    private static Dim[]? Unsqueeze(Dim[]? x, long[]? axes)
    {
        if (x is null || axes is null) return null;
        var rank = x.Length + axes.Length;
        if (Normalize(axes, rank) is not { } insert) return null;
        var result = new Dim[rank];
        var source = 0;
        for (var i = 0; i < rank; i++)
            result[i] = insert.Contains(i) ? Dim.Of(1) : x[source++];
        return result;
    }

    private static Dim[]? Reduce(NodeProto node, Dim[]? x, long[]? axes)
    {
        if (x is null) return null;
        var keepDims = OnnxAttributes.Int(node, "keepdims", 1) != 0;
        if (axes is null || axes.Length == 0)
        {
            if (OnnxAttributes.Int(node, "noop_with_empty_axes", 0) != 0) return x;
            axes = Enumerable.Range(0, x.Length).Select(i => (long)i).ToArray();
        }
        if (Normalize(axes, x.Length) is not { } reduced) return null;
        var result = new List<Dim>();
        for (var i = 0; i < x.Length; i++)
        {
            if (!reduced.Contains(i)) result.Add(x[i]);
            else if (keepDims) result.Add(Dim.Of(1));
        }
        return result.ToArray();
    }

    private static Dim[]? Constant(NodeProto node, ShapeTable table)
    {
        var output = node.Output.Count > 0 ? node.Output[0] : "";
        if (OnnxAttributes.Find(node, "value") is { T: { } tensor })
        {
            table.SetValues(output, OnnxAttributes.IntegerValues(tensor));
            return tensor.Dims.Select(Dim.Of).ToArray();
        }
        if (OnnxAttributes.Find(node, "value_ints") is { } ints)
        {
            table.SetValues(output, ints.Ints.ToArray());
            return [Dim.Of(ints.Ints.Count)];
        }
        if (OnnxAttributes.Find(node, "value_floats") is { } floats) return [Dim.Of(floats.Floats.Count)];
        if (OnnxAttributes.Find(node, "value_int") is { } scalar)
        {
            table.SetValues(output, [scalar.I]);
            return [];
        }
        if (OnnxAttributes.Find(node, "value_float") is not null) return [];
        return null;
    }
}
