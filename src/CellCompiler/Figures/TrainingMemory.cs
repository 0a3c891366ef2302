using CellCompiler.Shapes;

namespace CellCompiler.Figures;

/// <summary>
/// Estimated memory to train the network at a batch size, float32 (common practice for a rough
/// figure; an estimate only, real frameworks save fewer or more tensors and add workspace):
/// batch * (bytes of every activation tensor at N = 1, the input included, all kept for the
/// backward pass) + 4 copies of every parameter (weight, gradient, two optimizer moments)
/// + the BatchNorm running statistics.
/// </summary>
public static class TrainingMemory
{
    public const int ParameterCopies = 4;

    /// <summary>float32 bytes of all activation tensors of one sample: the input and every op's output.</summary>
    public static long ActivationBytesPerSample(ShapedNetwork net)
    {
        long total = net.InputShape.Elements * sizeof(float);
        foreach (var op in net.Network.Ops)
            total += net[op.Output].Elements * sizeof(float);
        return total;
    }

    public static long EstimateBytes(ShapedNetwork net, NetworkFigures figures, int batch) =>
        EstimateBytes(ActivationBytesPerSample(net), figures.Params, figures.Buffers, batch);

    /// <summary>The formula from its parts; saturates at long.MaxValue instead of overflowing.</summary>
    public static long EstimateBytes(long activationBytesPerSample, long parameters, long buffers, int batch)
    {
        var total = (Int128)batch * activationBytesPerSample
                    + (Int128)ParameterCopies * parameters * sizeof(float)
                    + (Int128)buffers * sizeof(float);
        return total > long.MaxValue ? long.MaxValue : (long)total;
    }
}
