using CellCompiler.Graph;
using CellCompiler.Vocabulary;

namespace CellCompiler.Lowering;

/// <summary>Collects ops in execution order; names double as output tensor names.</summary>
internal sealed class NetworkBuilder(int opset)
{
    /// <summary>HardSwish is an ONNX operator from opset 14; before that it is written as HardSigmoid then Mul.</summary>
    public const int HardSwishOpset = 14;

    private readonly List<NetOp> _ops = [];

    public IReadOnlyList<NetOp> Ops => _ops;

    public int Opset => opset;

    public string Add(NetOp op)
    {
        _ops.Add(op);
        return op.Output;
    }

    /// <summary>Gives the last op's output tensor a fixed name (the graph output).</summary>
    public string NameLastOutput(string name)
    {
        _ops[^1] = _ops[^1] with { OutputName = name };
        return name;
    }

    /// <summary>A sink whose layer names are relative to <paramref name="scope"/>, in a cell of <paramref name="cellChannels"/> channels.</summary>
    public ILayerSink<string> At(NodePath scope, int cellChannels) => new ScopedLayers(this, scope, cellChannels);

    /// <summary>Turns layers into our network ops. Inside a cell every tensor has C channels, so a primitive's Cin is C.</summary>
    private sealed class ScopedLayers(NetworkBuilder builder, NodePath scope, int channels) : ILayerSink<string>
    {
        private string Name(string relative) => relative.Length == 0 ? scope.Value : scope.Layer(relative).Value;

        public string Conv(string x, ConvLayer layer, string name) => builder.Add(new ConvOp(Name(name), x,
            layer.KernelH, layer.KernelW, layer.Stride, layer.PadH, layer.PadW, layer.Dilation,
            layer.Depthwise ? null : layer.Out!.Resolve(channels, channels), layer.Depthwise, layer.Bias));

        public string BatchNorm(string x, string name) => builder.Add(new BatchNormOp(Name(name), x));

        public string Activation(string x, Activation act, string name)
        {
            var output = Name(name);
            return act switch
            {
                Vocabulary.Activation.Relu => builder.Add(new ReluOp(output, x)),
                Vocabulary.Activation.Relu6 => builder.Add(new ClipOp(output, x, 0, 6)),
                Vocabulary.Activation.Silu => builder.Add(new MulOp(output, x, builder.Add(new SigmoidOp($"{output}/sigmoid", x)))),
                Vocabulary.Activation.HardSwish when builder.Opset >= HardSwishOpset => builder.Add(new HardSwishOp(output, x)),
                // x * HardSigmoid(x) with alpha 1/6 and beta 0.5 is HardSwish's definition.
                Vocabulary.Activation.HardSwish => builder.Add(new MulOp(output, x, builder.Add(new HardSigmoidOp($"{output}/hsigmoid", x, 1f / 6, 0.5f)))),
                Vocabulary.Activation.None => x,
                _ => throw new InvalidOperationException($"unknown activation {act}"),
            };
        }

        public string Pool(string x, PoolLayer layer, string name) => layer.Kind switch
        {
            PoolKind.Max => builder.Add(new MaxPoolOp(Name(name), x, layer.Kernel, layer.Stride, layer.Pad)),
            PoolKind.Average => builder.Add(new AveragePoolOp(Name(name), x, layer.Kernel, layer.Stride, layer.Pad)),
            _ => throw new InvalidOperationException($"unknown pool kind {layer.Kind}"),
        };

        public string GlobalAveragePool(string x, string name) => builder.Add(new GlobalAveragePoolOp(Name(name), x));
        public string Sigmoid(string x, string name) => builder.Add(new SigmoidOp(Name(name), x));
        public string Mul(string x, string gate, string name) => builder.Add(new MulOp(Name(name), x, gate));
        public string Concat(IReadOnlyList<string> parts, string name) => builder.Add(new ConcatOp(Name(name), parts.ToArray()));
        public string Sum(IReadOnlyList<string> terms, string name) => builder.Add(new SumOp(Name(name), terms.ToArray()));
        public string Flatten(string x, string name) => builder.Add(new FlattenOp(Name(name), x));
        public string Gemm(string x, int outFeatures, string name) => builder.Add(new GemmOp(Name(name), x, outFeatures));
    }
}
