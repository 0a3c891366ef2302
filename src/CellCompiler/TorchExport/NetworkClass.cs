using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.TorchExport;

/// <summary>
/// The macro network (contract section 2) as the class Network: the stem, each stage an
/// nn.Sequential of its cells, the reductions between stages and the head, each written by the same
/// <see cref="MacroLayers"/> lowering the compiler uses, at the module path of its node names.
/// </summary>
internal static class NetworkClass
{
    public static (PyClass, string) Write(Skeleton skeleton, string cellClass)
    {
        var net = new PyClass("Network",
        [
            "The stem, the stages of cells with a reduction between stages, and the head.",
            $"Input [N, {skeleton.Input.Channels}, {skeleton.Input.Height}, {skeleton.Input.Width}], output the logits [N, {skeleton.Classes}].",
        ], [], ["images"]);

        var first = skeleton.Stages[0].Channels;
        var x = new PyTensor("images", PyChannels.Of(skeleton.Input.Channels));
        x = MacroLayers.Stem(Sink(net, NodePath.Stem, first), skeleton, x);
        for (var t = 0; t < skeleton.Stages.Count; t++)
        {
            var stage = skeleton.Stages[t];
            if (t > 0)
                x = MacroLayers.Reduction(Sink(net, NodePath.Reduction(t - 1), stage.Channels), skeleton.Reduction, stage.Channels, x);
            var stagePath = NodePath.ModuleSegments(NodePath.Cell(t, 0).Value).Take(1).ToList();
            var call = net.Container(stagePath, "nn.Sequential()");
            for (var c = 0; c < stage.Cells; c++)
                net.Module(NodePath.ModuleSegments(NodePath.Cell(t, c).Value), $"{cellClass}({PyText.Int(stage.Channels)})");
            var output = net.Variable(stagePath);
            net.Forward($"{output} = {call}({x.Variable})");
            x = new PyTensor(output, PyChannels.Of(stage.Channels));
        }
        var logits = MacroLayers.Head(Sink(net, NodePath.Head, skeleton.Stages[^1].Channels), skeleton.Classes, x);
        return (net, logits.Variable);
    }

    private static TorchLayerSink Sink(PyClass net, NodePath scope, int channels) =>
        new(net, NodePath.ModuleSegments(scope.Value), PyChannels.Of(channels));
}
