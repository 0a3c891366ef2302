using CellCompiler.Graph;
using CellCompiler.Vocabulary;

namespace CellCompiler.TorchExport;

/// <summary>
/// The layer sink that writes PyTorch: each layer with weights or settings becomes a submodule of
/// the class being written, at the module path of its node name (<see cref="NodePath.ModuleSegments"/>
/// of the scope and the layer's relative name), and a forward line whose variable is named after it;
/// products, concatenations and sums are expressions. Channel counts stay symbolic in the class's
/// constructor parameter, so one class serves every width.
/// </summary>
internal sealed class TorchLayerSink(PyClass target, IReadOnlyList<string> scope, PyChannels cell) : ILayerSink<PyTensor>
{
    /// <summary>ONNX BatchNormalization's epsilon, and its momentum (weight of the old running value) as PyTorch's (weight of the new one).</summary>
    private static readonly string BatchNormSettings =
        $"eps={PyText.Float((double)(decimal)BatchNormOp.Epsilon)}, momentum={PyText.Float((double)(1m - (decimal)BatchNormOp.Momentum))}";

    private List<string> PathOf(string name) => [.. scope, .. NodePath.ModuleSegments(name)];

    /// <summary>A submodule applied to one tensor.</summary>
    private PyTensor Apply(PyTensor x, string name, string constructor, Func<PyTensor, PyTensor> shape)
    {
        var path = PathOf(name);
        var call = target.Module(path, constructor);
        var result = shape(x) with { Variable = target.Variable(path) };
        target.Forward($"{result.Variable} = {call}({x.Variable})");
        return result;
    }

    /// <summary>A forward expression without a submodule (products, concatenations, sums).</summary>
    private PyTensor Expression(string name, string expression, PyChannels channels)
    {
        var variable = target.Variable(PathOf(name));
        target.Forward($"{variable} = {expression}");
        return new PyTensor(variable, channels);
    }

    private static void RequireImage(PyTensor x, string layer)
    {
        if (x.Flat) throw new InvalidOperationException($"{layer} of a flattened tensor has no PyTorch form here");
    }

    public PyTensor Conv(PyTensor x, ConvLayer layer, string name)
    {
        RequireImage(x, "a convolution");
        var input = x.Channels;
        var output = layer.Depthwise ? input : PyChannels.Resolve(layer.Out ?? throw new InvalidOperationException("a full convolution needs an output size"), cell);
        var arguments = new List<string> { input.ToString(), output.ToString(), PyText.Pair(layer.KernelH, layer.KernelW) };
        if (layer.Stride != 1) arguments.Add($"stride={PyText.Int(layer.Stride)}");
        if (layer.PadH != 0 || layer.PadW != 0) arguments.Add($"padding={PyText.Pair(layer.PadH, layer.PadW)}");
        if (layer.Dilation != 1) arguments.Add($"dilation={PyText.Int(layer.Dilation)}");
        if (layer.Depthwise) arguments.Add($"groups={input}");
        arguments.Add(layer.Bias ? "bias=True" : "bias=False");
        return Apply(x, name, $"nn.Conv2d({string.Join(", ", arguments)})", t => new PyTensor("", output, t.Pooled));
    }

    public PyTensor BatchNorm(PyTensor x, string name)
    {
        RequireImage(x, "a batch normalization");
        return Apply(x, name, $"nn.BatchNorm2d({x.Channels}, {BatchNormSettings})", t => t);
    }

    public PyTensor Activation(PyTensor x, Activation act, string name) => act switch
    {
        Vocabulary.Activation.None => x,
        Vocabulary.Activation.Relu => Apply(x, name, "nn.ReLU()", t => t),
        // Clip to [0, 6]; ONNX's bounds (initializers NAME.min, NAME.max) are Hardtanh's min_val and max_val.
        Vocabulary.Activation.Relu6 => Apply(x, name, "nn.ReLU6()", t => t),
        Vocabulary.Activation.Silu => Apply(x, name, "nn.SiLU()", t => t),
        // x * HardSigmoid(x) with alpha 1/6, beta 0.5, which ONNX writes as HardSwish from opset 14.
        Vocabulary.Activation.HardSwish => Apply(x, name, "nn.Hardswish()", t => t),
        _ => throw new InvalidOperationException($"unknown activation {act}"),
    };

    public PyTensor Pool(PyTensor x, PoolLayer layer, string name)
    {
        RequireImage(x, "a pooling");
        var window = $"{PyText.Int(layer.Kernel)}, stride={PyText.Int(layer.Stride)}, padding={PyText.Int(layer.Pad)}";
        var constructor = layer.Kind switch
        {
            PoolKind.Max => $"nn.MaxPool2d({window})",
            PoolKind.Average => $"nn.AvgPool2d({window}, count_include_pad=False)",
            _ => throw new InvalidOperationException($"unknown pool kind {layer.Kind}"),
        };
        return Apply(x, name, constructor, t => t);
    }

    public PyTensor GlobalAveragePool(PyTensor x, string name)
    {
        RequireImage(x, "a global average pool");
        return Apply(x, name, "nn.AdaptiveAvgPool2d(1)", t => t with { Pooled = true });
    }

    public PyTensor Sigmoid(PyTensor x, string name) => Apply(x, name, "nn.Sigmoid()", t => t);

    public PyTensor Mul(PyTensor x, PyTensor gate, string name) =>
        Expression(name, $"{x.Variable} * {gate.Variable}", x.Channels);

    public PyTensor Concat(IReadOnlyList<PyTensor> parts, string name)
    {
        var channels = parts.Skip(1).Aggregate(parts[0].Channels, (sum, part) => sum.Plus(part.Channels));
        return Expression(name, $"torch.cat([{string.Join(", ", parts.Select(p => p.Variable))}], 1)", channels);
    }

    public PyTensor Sum(IReadOnlyList<PyTensor> terms, string name) =>
        Expression(name, string.Join(" + ", terms.Select(t => t.Variable)), terms[0].Channels);

    public PyTensor Flatten(PyTensor x, string name)
    {
        if (!x.Pooled) throw new InvalidOperationException("only a 1x1 tensor (after a global average pool) is flattened here");
        return Apply(x, name, "nn.Flatten(1)", t => t with { Pooled = false, Flat = true });
    }

    public PyTensor Gemm(PyTensor x, int outFeatures, string name)
    {
        if (!x.Flat) throw new InvalidOperationException("a fully connected layer needs a flattened tensor");
        return Apply(x, name, $"nn.Linear({x.Channels}, {PyText.Int(outFeatures)})", t => new PyTensor("", PyChannels.Of(outFeatures), Flat: true));
    }
}
