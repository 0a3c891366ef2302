namespace CellCompiler.Runtime;

/// <summary>
/// How latency is measured: warm-up runs first, then at least <see cref="Runs"/> timed runs, continuing
/// until <see cref="MinSeconds"/> of timed runs have passed; for each batch size.
/// </summary>
public sealed record LatencySettings(int Threads = 1, int Warmup = 10, int Runs = 50, double MinSeconds = 0, IReadOnlyList<int>? Batches = null)
{
    public IReadOnlyList<int> BatchSizes => Batches ?? [1];
    public static readonly LatencySettings Default = new();
}

/// <summary>Timing statistics of one batch size, in milliseconds per run.</summary>
public sealed record LatencyStats(int Batch, int Runs, double MinMs, double P50Ms, double P90Ms, double MeanMs, double StdMs)
{
    /// <summary>Shape of the model's first output at this batch size.</summary>
    public IReadOnlyList<long> OutputShape { get; init; } = [];

    /// <summary>Samples per second at the median run time.</summary>
    public double SamplesPerSecond => Batch * 1000.0 / P50Ms;

    /// <summary>Statistics of raw run times; percentiles interpolate linearly between order statistics.</summary>
    public static LatencyStats From(int batch, IReadOnlyList<double> runMs)
    {
        var sorted = runMs.Order().ToArray();
        var mean = sorted.Average();
        var variance = sorted.Length > 1 ? sorted.Sum(t => (t - mean) * (t - mean)) / (sorted.Length - 1) : 0;
        return new LatencyStats(batch, sorted.Length, sorted[0], Percentile(sorted, 0.5), Percentile(sorted, 0.9), mean, Math.Sqrt(variance));
    }

    public static double Percentile(double[] sorted, double q)
    {
        var position = q * (sorted.Length - 1);
        var low = (int)Math.Floor(position);
        var high = Math.Min(low + 1, sorted.Length - 1);
        return sorted[low] + (sorted[high] - sorted[low]) * (position - low);
    }
}

/// <summary>A latency measurement with everything needed to reproduce it.</summary>
public sealed record LatencyReport(IReadOnlyList<LatencyStats> Batches, int Threads, string RuntimeVersion, string Processor)
{
    public LatencyStats? AtBatch(int batch) => Batches.FirstOrDefault(b => b.Batch == batch);
}
