namespace CellCompiler.Graph;

/// <summary>Concatenation along the channel axis; every part must have the same height and width.</summary>
public sealed record ConcatOp(string Name, IReadOnlyList<string> Parts) : NetOp(Name, Parts)
{
    public override string OnnxType => "Concat";

    public override TensorShape InferShape(InputShapes inputs)
    {
        var first = inputs.First;
        var channels = 0L;
        for (var i = 0; i < inputs.Count; i++)
        {
            var shape = inputs[i];
            if (shape.Height != first.Height || shape.Width != first.Width || shape.IsFlat != first.IsFlat)
                throw new CompileException($"{Name}: concatenated tensors differ in height or width ({first} and {shape})");
            channels += shape.Channels;
        }
        if (channels > int.MaxValue) throw new CompileException($"{Name}: {channels:N0} concatenated channels are too many");
        return first with { Channels = (int)channels };
    }

    public override IReadOnlyList<NodeAttribute> Attributes(InputShapes inputs) => [new IntAttribute("axis", 1)];
}

/// <summary>Elementwise sum of two or more tensors of equal shape (merge `sum`).</summary>
public sealed record SumOp(string Name, IReadOnlyList<string> Terms) : NetOp(Name, Terms)
{
    public override string OnnxType => "Sum";

    public override TensorShape InferShape(InputShapes inputs)
    {
        var first = inputs.First;
        for (var i = 1; i < inputs.Count; i++)
            if (inputs[i] != first)
                throw new CompileException(
                    $"{Name}: merge 'sum' needs equal shapes, but {inputs.NameOf(0)} is {first} and {inputs.NameOf(i)} is {inputs[i]}");
        return first;
    }
}
