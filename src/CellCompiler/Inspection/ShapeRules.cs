namespace CellCompiler.Inspection;

/// <summary>
/// Output shapes of standard ONNX ops from their inputs' shapes, attributes and folded values,
/// the way ONNX shape inference states them in the operator specifications. A rule that cannot
/// give a shape returns null (or leaves dimensions unknown) and says why through
/// <see cref="NodeContext.Unknown"/>; an op without a rule says that it has none.
/// </summary>
internal static class ShapeRules
{
    private static readonly HashSet<string> SameShapeOps = new(StringComparer.Ordinal)
    {
        "Relu", "LeakyRelu", "Sigmoid", "Tanh", "HardSigmoid", "HardSwish", "Elu", "Selu", "Celu", "Softplus",
        "Softsign", "Gelu", "Mish", "ThresholdedRelu", "Erf", "Exp", "Log", "Sqrt", "Reciprocal", "Neg", "Abs",
        "Floor", "Ceil", "Round", "Sign", "Sin", "Cos", "Tan", "Asin", "Acos", "Atan", "Sinh", "Cosh", "Asinh",
        "Acosh", "Atanh", "Not", "BitwiseNot", "IsNaN", "IsInf", "Cast", "CastLike", "Clip", "Dropout", "Identity",
        "BatchNormalization", "InstanceNormalization", "LayerNormalization", "GroupNormalization",
        "LpNormalization", "MeanVarianceNormalization", "LRN", "Softmax", "LogSoftmax", "Hardmax", "Shrink",
        "QuantizeLinear", "DequantizeLinear", "CumSum", "Trilu", "ScatterElements", "ScatterND",
        "RandomNormalLike", "RandomUniformLike", "Bernoulli",
    };

    private static readonly HashSet<string> BroadcastOps = new(StringComparer.Ordinal)
    {
        "Add", "Sub", "Mul", "Div", "Pow", "Mod", "Sum", "Max", "Min", "Mean", "Where", "PRelu",
        "Equal", "Less", "Greater", "LessOrEqual", "GreaterOrEqual", "And", "Or", "Xor", "BitShift",
        "BitwiseAnd", "BitwiseOr", "BitwiseXor",
    };

    private static readonly HashSet<string> ReduceOps = new(StringComparer.Ordinal)
    {
        "ReduceMean", "ReduceSum", "ReduceMax", "ReduceMin", "ReduceProd", "ReduceL1", "ReduceL2",
        "ReduceLogSum", "ReduceLogSumExp", "ReduceSumSquare",
    };

    /// <summary>One entry per output the rule knows (missing or null entries: not known).</summary>
    public static Dim[]?[] Infer(NodeContext c)
    {
        if (c.Node.Domain is not ("" or "ai.onnx"))
        {
            c.Unknown($"it is an op of the '{c.Node.Domain}' domain; cellc knows the shapes of standard ONNX ops only");
            return [];
        }
        var op = c.Op;
        if (SameShapeOps.Contains(op)) return SameShape(c);
        if (BroadcastOps.Contains(op)) return [Broadcast(c)];
        if (ReduceOps.Contains(op)) return [Reduce(c)];
        return op switch
        {
            "Conv" => [Conv(c)],
            "ConvTranspose" => [ConvTranspose(c)],
            "MaxPool" or "AveragePool" or "LpPool" => Pool(c),
            "GlobalAveragePool" or "GlobalMaxPool" or "GlobalLpPool" => [GlobalPool(c)],
            "Flatten" => [Flatten(c)],
            "Gemm" => [Gemm(c)],
            "MatMul" => [MatMul(c)],
            "Concat" => [Concat(c)],
            "Reshape" => [Reshape(c)],
            "Transpose" => [Transpose(c)],
            "Squeeze" => [Squeeze(c)],
            "Unsqueeze" => [Unsqueeze(c)],
            "Shape" => [c.In(0) is { } x && ShapeRange(c, x.Length) is var (start, end) ? [Dim.Of(end - start)] : null],
            "Size" => [[]],
            "Gather" => [Gather(c)],
            "Constant" => [Constant(c)],
            "Pad" => [Pad(c)],
            "Slice" => [Slice(c)],
            "Split" => Split(c),
            "Expand" => [Expand(c)],
            "Tile" => [Tile(c)],
            "ConstantOfShape" => [c.Values(0) is { } shape ? Checked(shape.Elements) : c.Unknown("its shape input is computed at run time from values cellc cannot fold")],
            "Range" => [Range(c)],
            "ArgMax" or "ArgMin" => [ArgReduce(c)],
            "TopK" => TopK(c),
            "DepthToSpace" or "SpaceToDepth" => [BlockRearrange(c)],
            "Resize" => [Resize(c)],
            "NonZero" or "Unique" or "NonMaxSuppression" or "Compress" =>
                [c.Unknown($"the size of what {op} returns depends on the data, not on shapes")],
            "If" or "Loop" or "Scan" => [c.Unknown($"its outputs come from a subgraph ({op}), which cellc does not follow")],
            _ => [c.Unknown($"cellc has no shape rule for {op}")],
        };
    }

    private static Dim[]?[] SameShape(NodeContext c)
    {
        var x = c.In(0);
        // Training-mode BatchNormalization's extra outputs (running and saved statistics) are [C]; Dropout's mask is X's shape.
        if (c.Op == "BatchNormalization")
            return [x, .. Enumerable.Repeat(x is { Length: >= 2 } ? new[] { x[1] } : null, 4)];
        return [x, c.Op == "Dropout" ? x : null];
    }

    private static Dim[]? Broadcast(NodeContext c)
    {
        if (c.Inputs == 0) return null;
        var result = c.In(0);
        for (var i = 1; i < c.Inputs && result is not null; i++)
            result = c.In(i) is { } other ? DimMath.Broadcast(result, other) : null;
        return result;
    }

    /// <summary>A shape from values: negative sizes are not shapes.</summary>
    private static Dim[] Checked(Dim[] dims) => dims.Select(d => d.Value < 0 ? Dim.Unknown : d).ToArray();

    // ---- convolution and pooling ------------------------------------------------------------

    private static Dim[]? Conv(NodeContext c)
    {
        var (x, w) = (c.In(0), c.In(1));
        if (x is null) return null;
        if (x.Length < 3) return c.Unknown($"its input has rank {x.Length}; Conv needs [N, C, spatial...]");
        var kernel = c.Ints("kernel_shape")
            ?? (w is not null && w.Length == x.Length && w.Skip(2).All(d => d.IsKnown) ? w.Skip(2).Select(d => d.Value!.Value).ToArray() : null);
        if (kernel is null) return c.Unknown("neither its kernel_shape nor its weight's shape is known");
        return Windowed(c, x, w is { Length: > 0 } ? w[0] : Dim.Unknown, kernel, ceilMode: false);
    }

    private static Dim[]?[] Pool(NodeContext c)
    {
        var x = c.In(0);
        if (x is null) return [];
        if (x.Length < 3) return [c.Unknown($"its input has rank {x.Length}; pooling needs [N, C, spatial...]")];
        if (c.Ints("kernel_shape") is not { } kernel) return [c.Unknown("it has no kernel_shape")];
        var y = Windowed(c, x, x[1], kernel, c.Int("ceil_mode", 0) != 0);
        return [y, y];   // MaxPool's optional second output (indices) has the same shape
    }

    /// <summary>
    /// Output of Conv and pooling: [N, channels, spatial...] with the ONNX output-size rules
    /// (explicit pads, or auto_pad SAME_UPPER/SAME_LOWER/VALID; ceil_mode for pools).
    /// </summary>
    private static Dim[]? Windowed(NodeContext c, Dim[] x, Dim channels, long[] kernel, bool ceilMode)
    {
        var spatial = x.Length - 2;
        if (kernel.Length != spatial) return c.Unknown($"its kernel has {kernel.Length} dimensions for {spatial} spatial ones");
        var strides = c.Ints("strides") is { Length: > 0 } s ? s : Enumerable.Repeat(1L, spatial).ToArray();
        var dilations = c.Ints("dilations") is { Length: > 0 } d ? d : Enumerable.Repeat(1L, spatial).ToArray();
        var pads = c.Ints("pads") is { Length: > 0 } p ? p : new long[2 * spatial];
        var autoPad = c.String("auto_pad", "NOTSET");
        if (strides.Length != spatial || dilations.Length != spatial || pads.Length != 2 * spatial)
            return c.Unknown("its strides, dilations or pads do not match its spatial rank");

        var result = new Dim[x.Length];
        result[0] = x[0];
        result[1] = channels;
        for (var i = 0; i < spatial; i++)
        {
            var input = x[2 + i];
            if (!input.IsKnown) { result[2 + i] = Dim.Unknown; continue; }
            if (strides[i] <= 0 || kernel[i] <= 0 || dilations[i] <= 0)
            {
                c.Unknown("its kernel, strides or dilations are not positive");
                result[2 + i] = Dim.Unknown;
                continue;
            }
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
            if (output <= 0) c.Unknown($"its window ({kernel[i]} wide) does not fit the input ({size} wide)");
            result[2 + i] = output > 0 ? Dim.Of(output) : Dim.Unknown;
        }
        return result;
    }

    /// <summary>ConvTranspose: stride * (in - 1) + output_padding + dilated kernel - pads, or output_shape when stated.</summary>
    private static Dim[]? ConvTranspose(NodeContext c)
    {
        var (x, w) = (c.In(0), c.In(1));
        if (x is null) return null;
        if (x.Length < 3 || w is null || w.Length != x.Length) return c.Unknown("its input or weight shape is not known");
        var spatial = x.Length - 2;
        var kernel = c.Ints("kernel_shape") ?? (w.Skip(2).All(d => d.IsKnown) ? w.Skip(2).Select(d => d.Value!.Value).ToArray() : null);
        var strides = c.Ints("strides") is { Length: > 0 } s ? s : Enumerable.Repeat(1L, spatial).ToArray();
        var dilations = c.Ints("dilations") is { Length: > 0 } d ? d : Enumerable.Repeat(1L, spatial).ToArray();
        var pads = c.Ints("pads") is { Length: > 0 } p ? p : new long[2 * spatial];
        var outputPadding = c.Ints("output_padding") is { Length: > 0 } op ? op : new long[spatial];
        var outputShape = c.Ints("output_shape");
        if (kernel is null || kernel.Length != spatial || strides.Length != spatial || dilations.Length != spatial
            || pads.Length != 2 * spatial || outputPadding.Length != spatial)
            return c.Unknown("its kernel, strides, dilations or pads do not match its spatial rank");

        var result = new Dim[x.Length];
        result[0] = x[0];
        result[1] = DimMath.Mul(w[1], Dim.Of(c.Int("group", 1)));
        var autoPad = c.String("auto_pad", "NOTSET");
        for (var i = 0; i < spatial; i++)
        {
            if (outputShape is { } stated && stated.Length >= spatial) { result[2 + i] = Dim.Of(stated[^(spatial - i)]); continue; }
            if (x[2 + i].Value is not { } size) { result[2 + i] = Dim.Unknown; continue; }
            var output = autoPad is "SAME_UPPER" or "SAME_LOWER"
                ? checked(size * strides[i])
                : checked(strides[i] * (size - 1) + outputPadding[i] + (kernel[i] - 1) * dilations[i] + 1 - pads[i] - pads[spatial + i]);
            result[2 + i] = output > 0 ? Dim.Of(output) : Dim.Unknown;
        }
        return result;
    }

    private static Dim[]? GlobalPool(NodeContext c)
    {
        var x = c.In(0);
        if (x is null) return null;
        if (x.Length < 2) return c.Unknown($"its input has rank {x.Length}");
        return [x[0], x[1], .. Enumerable.Repeat(Dim.Of(1), x.Length - 2)];
    }

    private static long CeilDiv(long a, long b) => a / b + (a % b > 0 ? 1 : 0);

    // ---- matrices ---------------------------------------------------------------------------

    private static Dim[]? Gemm(NodeContext c)
    {
        var (a, b) = (c.In(0), c.In(1));
        var m = a is { Length: 2 } ? a[c.Int("transA", 0) != 0 ? 1 : 0] : Dim.Unknown;
        var n = b is { Length: 2 } ? b[c.Int("transB", 0) != 0 ? 0 : 1] : Dim.Unknown;
        return [m, n];
    }

    private static Dim[]? MatMul(NodeContext c)
    {
        var (a, b) = (c.In(0), c.In(1));
        if (a is null || b is null) return null;
        if (a.Length == 0 || b.Length == 0) return c.Unknown("MatMul of a scalar");
        var batch = DimMath.Broadcast(a.Length > 2 ? a[..^2] : [], b.Length > 2 ? b[..^2] : []);
        var result = new List<Dim>(batch);
        if (a.Length >= 2) result.Add(a[^2]);
        if (b.Length >= 2) result.Add(b[^1]);
        return result.ToArray();
    }

    // ---- reshaping --------------------------------------------------------------------------

    private static Dim[]? Flatten(NodeContext c)
    {
        var x = c.In(0);
        if (x is null) return null;
        var axis = c.Int("axis", 1);
        if (axis < 0) axis += x.Length;
        if (axis < 0 || axis > x.Length) return c.Unknown($"its axis is outside rank {x.Length}");
        return [DimMath.Product(x[..(int)axis]), DimMath.Product(x[(int)axis..])];
    }

    private static Dim[]? Concat(NodeContext c)
    {
        var inputs = Enumerable.Range(0, c.Inputs).Select(c.In).ToList();
        if (inputs.Count == 0 || inputs.Any(s => s is null)) return null;
        if (inputs.Select(s => s!.Length).Distinct().Count() != 1) return c.Unknown("its inputs have different ranks");
        var rank = inputs[0]!.Length;
        if (NodeContext.Axis(c.Int("axis", 1), rank) is not { } axis) return c.Unknown($"its axis is outside rank {rank}");
        var result = new Dim[rank];
        for (var i = 0; i < rank; i++)
        {
            var dims = inputs.Select(s => s![i]).ToList();
            result[i] = i == axis
                ? dims.Aggregate(Dim.Of(0), DimMath.Add)
                : dims.FirstOrDefault(d => d.IsKnown, dims[0]);
        }
        return result;
    }

    /// <summary>
    /// Reshape to a shape whose values are known (constants, or sizes read from other shapes): 0 copies
    /// the input's dimension (unless allowzero), -1 takes the remaining elements, which needs every
    /// input dimension known except symbolic ones that the target keeps (the batch, usually).
    /// </summary>
    private static Dim[]? Reshape(NodeContext c)
    {
        var x = c.In(0);
        if (c.Values(1) is not { } values)
            return c.Unknown($"its target shape (input 2, '{c.InputName(1)}') is computed at run time from values cellc cannot fold");
        var target = values.Elements;
        var allowZero = c.Int("allowzero", 0) != 0;
        var result = new Dim[target.Length];
        var inferIndex = -1;
        for (var i = 0; i < target.Length; i++)
        {
            if (target[i].Value is not { } t)
            {
                result[i] = target[i];   // a symbolic size taken from another tensor's shape, or unknown
                if (!target[i].IsKnown && string.IsNullOrEmpty(target[i].Param))
                    c.Unknown($"element {i} of its target shape (input 2, '{c.InputName(1)}') is computed at run time from values cellc cannot fold");
            }
            else if (t == 0 && !allowZero) result[i] = x is not null && i < x.Length ? x[i] : Dim.Unknown;
            else if (t == -1 && inferIndex < 0) { inferIndex = i; result[i] = Dim.Unknown; }
            else if (t >= 0) result[i] = Dim.Of(t);
            else return c.Unknown($"its target shape holds {t}");
        }
        if (inferIndex < 0 || x is null) return result;

        // Elements of the input over the elements of the other output dims; symbolic dims must cancel exactly.
        long inKnown = 1, outKnown = 1;
        var inSymbols = new List<string>();
        var outSymbols = new List<string>();
        foreach (var d in x)
        {
            if (d.Value is { } v) inKnown = checked(inKnown * v);
            else if (!string.IsNullOrEmpty(d.Param)) inSymbols.Add(d.Param);
            else return result;
        }
        for (var i = 0; i < result.Length; i++)
        {
            if (i == inferIndex) continue;
            if (result[i].Value is { } v) outKnown = checked(outKnown * v);
            else if (!string.IsNullOrEmpty(result[i].Param)) outSymbols.Add(result[i].Param!);
            else return result;
        }
        inSymbols.Sort(StringComparer.Ordinal);
        outSymbols.Sort(StringComparer.Ordinal);
        if (inSymbols.SequenceEqual(outSymbols) && outKnown > 0 && inKnown % outKnown == 0)
            result[inferIndex] = Dim.Of(inKnown / outKnown);
        else
            c.Unknown("its -1 dimension does not follow from the input's size (symbolic dimensions do not cancel)");
        return result;
    }

    private static Dim[]? Transpose(NodeContext c)
    {
        var x = c.In(0);
        if (x is null) return null;
        var perm = c.Ints("perm") ?? Enumerable.Range(0, x.Length).Reverse().Select(i => (long)i).ToArray();
        if (perm.Length != x.Length || NodeContext.Axes(perm, x.Length) is not { } axes) return c.Unknown("its perm is not a permutation of the input's axes");
        return axes.Select(p => x[p]).ToArray();
    }

    /// <summary>Axes from the attribute (before opset 13) or from input 2 (opset 13 on); null and no reason when neither is given.</summary>
    private static (bool Given, long[]? Axes) AxesOf(NodeContext c)
    {
        if (c.Ints("axes") is { } attribute) return (true, attribute);
        return c.Has(1) ? (true, c.RequireNumbers(1, "axes")) : (false, null);
    }

    private static Dim[]? Squeeze(NodeContext c)
    {
        var x = c.In(0);
        var (given, axes) = AxesOf(c);
        if (x is null || (given && axes is null)) return null;
        if (!given || axes!.Length == 0)
            return x.All(d => d.IsKnown) ? x.Where(d => d.Value != 1).ToArray() : c.Unknown("without axes it depends on which symbolic dimensions are 1");
        if (NodeContext.Axes(axes, x.Length) is not { } remove) return c.Unknown($"its axes are outside rank {x.Length}");
        return x.Where((_, i) => !remove.Contains(i)).ToArray();
    }

    private static Dim[]? Unsqueeze(NodeContext c)
    {
        var x = c.In(0);
        var (given, axes) = AxesOf(c);
        if (x is null || (given && axes is null)) return null;
        if (!given) return c.Unknown("it has no axes");
        var rank = x.Length + axes!.Length;
        if (rank > ShapeTable.MaxRank) return c.Unknown($"the result would have rank {rank}, above the {ShapeTable.MaxRank} cellc follows");
        if (NodeContext.Axes(axes, rank) is not { } insert) return c.Unknown($"its axes are outside rank {rank}");
        var result = new Dim[rank];
        var source = 0;
        for (var i = 0; i < rank; i++)
            result[i] = insert.Contains(i) ? Dim.Of(1) : x[source++];
        return result;
    }

    private static Dim[]? Gather(NodeContext c)
    {
        var (data, indices) = (c.In(0), c.In(1));
        if (data is null || indices is null) return null;
        if (NodeContext.Axis(c.Int("axis", 0), data.Length) is not { } axis) return c.Unknown($"its axis is outside rank {data.Length}");
        return [.. data[..axis], .. indices, .. data[(axis + 1)..]];
    }

    /// <summary>The [start, end) range of dimensions that Shape returns (opset 15 start and end attributes).</summary>
    public static (int Start, int End)? ShapeRange(NodeContext c, int rank)
    {
        long Clamp(long v) => Math.Clamp(v < 0 ? v + rank : v, 0, rank);
        var start = Clamp(c.Int("start", 0));
        var end = Clamp(c.Int("end", rank));
        return end >= start ? ((int)start, (int)end) : ((int)start, (int)start);
    }

    private static Dim[]? Constant(NodeContext c)
    {
        if (OnnxAttributes.Find(c.Node, "value") is { } value)
            return value.T is { } tensor ? tensor.Dims.Select(d => d >= 0 ? Dim.Of(d) : Dim.Unknown).ToArray() : c.Unknown("its value is not a dense tensor");
        foreach (var list in new[] { "value_ints", "value_floats", "value_strings" })
            if (OnnxAttributes.Find(c.Node, list) is { } a)
                return [Dim.Of(list switch { "value_ints" => a.Ints.Count, "value_floats" => a.Floats.Count, _ => a.Strings.Count })];
        if (c.HasAttribute("value_int") || c.HasAttribute("value_float") || c.HasAttribute("value_string")) return [];
        return c.Unknown("it has no value attribute cellc reads");
    }

    // ---- padding, slicing, splitting --------------------------------------------------------

    /// <summary>Pad: each padded axis grows by its begin and end pads (pads from input 2 since opset 11, the attribute before).</summary>
    private static Dim[]? Pad(NodeContext c)
    {
        var x = c.In(0);
        long[]? pads;
        if (c.Has(1)) pads = c.RequireNumbers(1, "pads");
        else if ((pads = c.Ints("pads")) is null) return c.Unknown("it has no pads");
        if (x is null || pads is null) return null;
        var axesRaw = c.Has(3) ? c.RequireNumbers(3, "axes") : Enumerable.Range(0, x.Length).Select(i => (long)i).ToArray();
        if (axesRaw is null) return null;
        if (NodeContext.Axes(axesRaw, x.Length) is not { } axes || pads.Length != 2 * axes.Length)
            return c.Unknown($"its {pads.Length} pads do not match its {axesRaw.Length} axes");
        var result = (Dim[])x.Clone();
        for (var j = 0; j < axes.Length; j++)
        {
            var grown = DimMath.Add(x[axes[j]], Dim.Of(checked(pads[j] + pads[j + axes.Length])));
            result[axes[j]] = grown.Value < 0 ? Dim.Unknown : grown;
        }
        return result;
    }

    public sealed record SliceSpec(long[] Starts, long[] Ends, int[] Axes, long[] Steps);

    /// <summary>Starts, ends, axes and steps of a Slice: inputs 2-5 since opset 10, attributes before.</summary>
    public static SliceSpec? SliceParameters(NodeContext c, int rank)
    {
        long[]? starts, ends, axes, steps;
        if (c.Has(1))
        {
            starts = c.RequireNumbers(1, "starts");
            ends = c.RequireNumbers(2, "ends");
            axes = c.Has(3) ? c.RequireNumbers(3, "axes") : null;
            steps = c.Has(4) ? c.RequireNumbers(4, "steps") : null;
            if (starts is null || ends is null || (c.Has(3) && axes is null) || (c.Has(4) && steps is null)) return null;
        }
        else
        {
            (starts, ends, axes, steps) = (c.Ints("starts"), c.Ints("ends"), c.Ints("axes"), null);
            if (starts is null || ends is null) { c.Unknown("it has no starts and ends"); return null; }
        }
        axes ??= Enumerable.Range(0, starts.Length).Select(i => (long)i).ToArray();
        steps ??= Enumerable.Repeat(1L, starts.Length).ToArray();
        if (ends.Length != starts.Length || axes.Length != starts.Length || steps.Length != starts.Length || steps.Contains(0))
        {
            c.Unknown("its starts, ends, axes and steps do not match");
            return null;
        }
        if (NodeContext.Axes(axes, rank) is not { } normalized)
        {
            c.Unknown($"its axes are outside rank {rank}");
            return null;
        }
        return new SliceSpec(starts, ends, normalized, steps);
    }

    private static Dim[]? Slice(NodeContext c)
    {
        var x = c.In(0);
        if (x is null || SliceParameters(c, x.Length) is not { } p) return null;
        var result = (Dim[])x.Clone();
        for (var j = 0; j < p.Axes.Length; j++)
        {
            var dim = x[p.Axes[j]];
            if (dim.Value is { } size)
                result[p.Axes[j]] = Dim.Of(DimMath.SliceRange(size, p.Starts[j], p.Ends[j], p.Steps[j]).Count);
            // A symbolic dimension survives a slice that takes all of it.
            else if (!(p.Starts[j] == 0 && p.Steps[j] == 1 && p.Ends[j] >= int.MaxValue))
                result[p.Axes[j]] = Dim.Unknown;
        }
        return result;
    }

    /// <summary>Split: sizes from input 2 (opset 13 on) or the attribute; else num_outputs (opset 18, last part smaller) or equal parts.</summary>
    private static Dim[]?[] Split(NodeContext c)
    {
        var x = c.In(0);
        var sizes = c.Has(1) ? c.RequireNumbers(1, "split sizes") : c.Ints("split");
        if (x is null || (c.Has(1) && sizes is null)) return [];
        if (NodeContext.Axis(c.Int("axis", 0), x.Length) is not { } axis) return [c.Unknown($"its axis is outside rank {x.Length}")];
        var parts = c.Outputs;
        if (sizes is null)
        {
            if (x[axis].Value is not { } total) return [c.Unknown("it splits a dimension of unknown or symbolic size")];
            var byCount = c.HasAttribute("num_outputs");
            if (parts == 0 || (!byCount && total % parts != 0)) return [c.Unknown($"{total} does not split into {parts} equal parts")];
            var chunk = byCount ? CeilDiv(total, parts) : total / parts;
            sizes = Enumerable.Range(0, parts).Select(i => Math.Max(0, Math.Min(chunk, total - i * chunk))).ToArray();
        }
        if (sizes.Length != parts || sizes.Any(s => s < 0)) return [c.Unknown($"its {sizes.Length} sizes do not match its {parts} outputs")];
        return sizes.Select(size =>
        {
            var part = (Dim[])x.Clone();
            part[axis] = Dim.Of(size);
            return part;
        }).ToArray();
    }

    private static Dim[]? Expand(NodeContext c)
    {
        var x = c.In(0);
        if (c.Values(1) is not { } target)
            return c.Unknown($"its target shape (input 2, '{c.InputName(1)}') is computed at run time from values cellc cannot fold");
        return x is null ? null : DimMath.Broadcast(x, Checked(target.Elements));
    }

    private static Dim[]? Tile(NodeContext c)
    {
        var x = c.In(0);
        var repeats = c.RequireNumbers(1, "repeats");
        if (x is null || repeats is null) return null;
        if (repeats.Length != x.Length || repeats.Any(r => r < 0)) return c.Unknown("its repeats do not match the input's rank");
        return x.Select((d, i) => DimMath.Mul(d, Dim.Of(repeats[i]))).ToArray();
    }

    /// <summary>The number of elements Range makes: max(ceil((limit - start) / delta), 0); null if it does not fit a long.</summary>
    public static long? RangeCount(long start, long limit, long delta)
    {
        if (delta == 0) return null;
        var span = (Int128)limit - start;
        var count = span / delta + (span % delta != 0 && (span < 0) == (delta < 0) ? 1 : 0);
        return count <= 0 ? 0 : count > long.MaxValue ? null : (long)count;
    }

    private static Dim[]? Range(NodeContext c)
    {
        if (c.Numbers(0) is [var start] && c.Numbers(1) is [var limit] && c.Numbers(2) is [var delta] && RangeCount(start, limit, delta) is { } count)
            return [Dim.Of(count)];
        c.Unknown("its start, limit or delta is computed at run time from values cellc cannot fold");
        return [Dim.Unknown];
    }

    private static Dim[]? Reduce(NodeContext c)
    {
        var x = c.In(0);
        var (given, axes) = AxesOf(c);
        if (x is null || (given && axes is null)) return null;
        if (!given || axes!.Length == 0)
        {
            if (c.Int("noop_with_empty_axes", 0) != 0) return x;
            axes = Enumerable.Range(0, x.Length).Select(i => (long)i).ToArray();
        }
        if (NodeContext.Axes(axes, x.Length) is not { } reduced) return c.Unknown($"its axes are outside rank {x.Length}");
        return Reduced(x, reduced, c.Int("keepdims", 1) != 0);
    }

    private static Dim[] Reduced(Dim[] x, int[] axes, bool keepDims)
    {
        var result = new List<Dim>();
        for (var i = 0; i < x.Length; i++)
        {
            if (!axes.Contains(i)) result.Add(x[i]);
            else if (keepDims) result.Add(Dim.Of(1));
        }
        return result.ToArray();
    }

    private static Dim[]? ArgReduce(NodeContext c)
    {
        var x = c.In(0);
        if (x is null) return null;
        if (NodeContext.Axis(c.Int("axis", 0), x.Length) is not { } axis) return c.Unknown($"its axis is outside rank {x.Length}");
        return Reduced(x, [axis], c.Int("keepdims", 1) != 0);
    }

    private static Dim[]?[] TopK(NodeContext c)
    {
        var x = c.In(0);
        var k = c.RequireNumbers(1, "k");
        if (x is null || k is not [var count]) return [];
        if (NodeContext.Axis(c.Int("axis", -1), x.Length) is not { } axis) return [c.Unknown($"its axis is outside rank {x.Length}")];
        var result = (Dim[])x.Clone();
        result[axis] = Dim.Of(count);
        return [result, result];
    }

    /// <summary>DepthToSpace: [N, C / b^2, H * b, W * b]; SpaceToDepth the reverse.</summary>
    private static Dim[]? BlockRearrange(NodeContext c)
    {
        var x = c.In(0);
        if (x is null) return null;
        var b = c.Int("blocksize", 0);
        if (x.Length != 4 || b <= 0) return c.Unknown("it needs a 4-D input and a positive blocksize");
        var square = Dim.Of(checked(b * b));
        var block = Dim.Of(b);
        return c.Op == "DepthToSpace"
            ? [x[0], DimMath.Div(x[1], square, integral: false), DimMath.Mul(x[2], block), DimMath.Mul(x[3], block)]
            : [x[0], DimMath.Mul(x[1], square), DimMath.Div(x[2], block, integral: false), DimMath.Div(x[3], block, integral: false)];
    }

    /// <summary>Resize with its output sizes given (input 4); sizes from float scales are not folded.</summary>
    private static Dim[]? Resize(NodeContext c)
    {
        var x = c.In(0);
        if (!c.Has(3)) return c.Unknown("its output size comes from float scales, which cellc does not fold");
        var sizes = c.RequireNumbers(3, "sizes");
        if (x is null || sizes is null) return null;
        if (c.Ints("axes") is { } axesRaw)
        {
            if (NodeContext.Axes(axesRaw, x.Length) is not { } axes || axes.Length != sizes.Length) return c.Unknown("its sizes do not match its axes");
            var result = (Dim[])x.Clone();
            for (var j = 0; j < axes.Length; j++)
                result[axes[j]] = Dim.Of(sizes[j]);
            return result;
        }
        return sizes.Length == x.Length ? sizes.Select(Dim.Of).ToArray() : c.Unknown("its sizes do not match the input's rank");
    }
}
