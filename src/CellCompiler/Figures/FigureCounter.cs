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

    /// <summary>Largest total of float32 bytes alive at once, running ops in emitted order at N = 1 (see <see cref="LiveBytes"/>).</summary>
    public static long PeakActivationBytes(ShapedNetwork net) =>
        (long)LiveBytes.Peak(
            net.Network.Ops.Select(op => new RunStep(op.Inputs, [op.Output])).ToList(),
            [net.Network.InputName],
            tensor => net[tensor].Elements * sizeof(float));
}
