namespace CellCompiler.Figures;

/// <summary>The cost figures of contract section 4, for one sample (N = 1) where per-sample.</summary>
public sealed record NetworkFigures(
    long Params,
    long Buffers,
    long Macs,
    long PeakActivationBytes,
    IReadOnlyDictionary<string, int> OpCounts)
{
    /// <summary>float32 bytes of every initializer (parameters and buffers): the bulk of the model file.</summary>
    public long WeightBytes => (Params + Buffers) * sizeof(float);
}
