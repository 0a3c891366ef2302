using CellCompiler.Graph;
using CellCompiler.Shapes;

namespace CellCompiler.Figures;

/// <summary>Counts params, buffers, MACs, peak activation memory and op counts (contract section 4) from each op's own figures.</summary>
public static class FigureCounter
{
    public static NetworkFigures Count(ShapedNetwork net)
    {
        long parameters = 0, buffers = 0, macs = 0;
        var opCounts = new SortedDictionary<string, int>(StringComparer.Ordinal);
        foreach (var op in net.Network.Ops)
        {
            opCounts[op.OnnxType] = opCounts.GetValueOrDefault(op.OnnxType) + 1;
            var inputs = net.InputsOf(op);
            var output = net[op.Output];
            foreach (var weight in op.Weights(inputs, output))
            {
                switch (weight.Role)
                {
                    case WeightRole.Param: parameters += weight.Elements; break;
                    case WeightRole.Buffer: buffers += weight.Elements; break;
                    case WeightRole.Constant: break;
                    default: throw new InvalidOperationException($"unknown weight role {weight.Role}");
                }
            }
            macs += op.Macs(inputs, output);
        }
        return new NetworkFigures(parameters, buffers, macs, PeakActivationBytes(net), opCounts);
    }

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
