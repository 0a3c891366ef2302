namespace CellCompiler.Lowering;

/// <summary>Collects ops in execution order; names double as output tensor names.</summary>
internal sealed class NetworkBuilder
{
    private readonly List<NetOp> _ops = [];

    public IReadOnlyList<NetOp> Ops => _ops;

    public string Add(NetOp op)
    {
        _ops.Add(op);
        return op.Output;
    }

    /// <summary>Conv -> BatchNormalization -> Relu, the unit most primitives and merges end in.</summary>
    public string ConvBnRelu(string path, string input, int kernel, int stride, int outChannels) =>
        BnRelu(path, Add(new ConvOp($"{path}/conv", input, kernel, stride, kernel / 2, outChannels, Depthwise: false)));

    public string BnRelu(string path, string input) =>
        Add(new ReluOp($"{path}/relu", Add(new BatchNormOp($"{path}/bn", input))));

    public string Depthwise(string name, string input, int stride) =>
        Add(new ConvOp(name, input, 3, stride, 1, OutChannels: null, Depthwise: true));
}
