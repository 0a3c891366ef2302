using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Lowering;

/// <summary>
/// A network assembled from layers directly, outside a genotype, through the same builder the
/// lowerer uses: latency calibration times small probes (one primitive applied again and again, one
/// merge, the stem alone) and they must be made of exactly the layers a compiled network holds.
/// Lay layers with <see cref="At"/> and the lowerings of <see cref="MacroLayers"/> and the kinds.
/// </summary>
public sealed class LayerNetwork(InputSpec input, int opset)
{
    private readonly NetworkBuilder _builder = new(opset);

    /// <summary>The input tensor, [N, channels, height, width] of <paramref name="input"/>.</summary>
    public string Input => Network.DefaultInputName;

    /// <summary>A sink whose layer names are relative to <paramref name="scope"/>, in a cell of <paramref name="cellChannels"/> channels.</summary>
    public ILayerSink<string> At(NodePath scope, int cellChannels) => _builder.At(scope, cellChannels);

    /// <summary>The network so far, its last op's output being the graph output.</summary>
    public Network Finish()
    {
        if (_builder.Ops.Count == 0) throw new InvalidOperationException("a network needs at least one layer");
        _builder.NameLastOutput(Network.DefaultOutputName);
        return new Network(Network.DefaultInputName, input, Network.DefaultOutputName, _builder.Ops, []);
    }
}
