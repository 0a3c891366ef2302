using CellCompiler.Lowering;

namespace CellCompiler.Shapes;

/// <summary>A lowered network together with the inferred shape of every tensor.</summary>
public sealed record ShapedNetwork(Network Network, IReadOnlyDictionary<string, TensorShape> Shapes)
{
    public TensorShape this[string tensor] => Shapes[tensor];

    public TensorShape InputShape => Shapes[Network.InputName];

    public TensorShape OutputShape => Shapes[Network.OutputName];

    /// <summary>Channels of a conv's input per group, the second dimension of its weight.</summary>
    public int ConvInChannelsPerGroup(ConvOp conv) => conv.Depthwise ? 1 : Shapes[conv.Inputs[0]].Channels;

    public int ConvOutChannels(ConvOp conv) => conv.OutChannels ?? Shapes[conv.Inputs[0]].Channels;

    public int ConvGroups(ConvOp conv) => conv.Depthwise ? Shapes[conv.Inputs[0]].Channels : 1;
}
