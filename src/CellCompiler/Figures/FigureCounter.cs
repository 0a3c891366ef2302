using CellCompiler.Lowering;
using CellCompiler.Shapes;

namespace CellCompiler.Figures;

/// <summary>Counts params, buffers, MACs, peak activation memory and op counts (contract section 4).</summary>
public static class FigureCounter
{
    public static NetworkFigures Count(ShapedNetwork net)
    {
        long parameters = 0, buffers = 0, macs = 0;
        var opCounts = new SortedDictionary<string, int>(StringComparer.Ordinal);
        foreach (var op in net.Network.Ops)
        {
            opCounts[op.OnnxType] = opCounts.GetValueOrDefault(op.OnnxType) + 1;
            switch (op)
            {
                case ConvOp conv:
                {
                    var weights = ConvWeightElements(net, conv);
                    parameters += weights;
                    // MACs per output element equal the weights feeding it: (Cin/group) * kH * kW.
                    var output = net[conv.Output];
                    macs += (long)output.Height * output.Width * weights;
                    break;
                }
                case BatchNormOp bn:
                    parameters += 2L * net[bn.Output].Channels;
                    buffers += 2L * net[bn.Output].Channels;
                    break;
                case GemmOp gemm:
                {
                    long inFeatures = net[gemm.Inputs[0]].Channels;
                    parameters += inFeatures * gemm.OutFeatures + gemm.OutFeatures;
                    macs += inFeatures * gemm.OutFeatures;
                    break;
                }
            }
        }
        return new NetworkFigures(parameters, buffers, macs, PeakActivationBytes(net), opCounts);
    }

    /// <summary>Cout * (Cin / group) * kH * kW, the usual size of a conv weight (common practice).</summary>
    public static long ConvWeightElements(ShapedNetwork net, ConvOp conv) =>
        (long)net.ConvOutChannels(conv) * net.ConvInChannelsPerGroup(conv) * conv.Kernel * conv.Kernel;

    /// <summary>
    /// Largest total of float32 bytes alive at once, running ops in emitted order at N = 1. A tensor
    /// lives from the op that makes it (the input: from the start) to the last op that reads it.
    /// </summary>
    public static long PeakActivationBytes(ShapedNetwork net)
    {
        var ops = net.Network.Ops;
        var lastRead = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var step = 0; step < ops.Count; step++)
            foreach (var input in ops[step].Inputs)
                lastRead[input] = step;

        // Sweep: add each tensor's bytes at its birth step and remove them after its last read.
        var delta = new long[ops.Count + 1];
        void Live(string tensor, int birth)
        {
            var death = Math.Max(birth, lastRead.GetValueOrDefault(tensor, birth));
            var bytes = net[tensor].Elements * sizeof(float);
            delta[birth] += bytes;
            delta[death + 1] -= bytes;
        }
        Live(net.Network.InputName, 0);
        for (var step = 0; step < ops.Count; step++)
            Live(ops[step].Output, step);

        long alive = 0, peak = 0;
        for (var step = 0; step < ops.Count; step++)
        {
            alive += delta[step];
            peak = Math.Max(peak, alive);
        }
        return peak;
    }
}
