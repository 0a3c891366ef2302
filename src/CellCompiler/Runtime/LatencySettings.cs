using System.Text.Json.Serialization;

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

/// <summary>Timing statistics of one batch size, in milliseconds per run (JSON names: batch, runs, min_ms, p50_ms, ...).</summary>
public sealed record LatencyStats(
    int Batch,
    int Runs,
    [property: JsonPropertyName("min_ms")] double MinMs,
    [property: JsonPropertyName("p50_ms")] double P50Ms,
    [property: JsonPropertyName("p90_ms")] double P90Ms,
    [property: JsonPropertyName("mean_ms")] double MeanMs,
    [property: JsonPropertyName("std_ms")] double StdMs)
{
    /// <summary>A p90 above this multiple of p50 marks a noisy measurement (our own rule of thumb).</summary>
    public const double NoisyRatio = 1.5;

    /// <summary>Shape of the model's first output at this batch size (not part of a check record).</summary>
    [JsonIgnore]
    public IReadOnlyList<long> OutputShape { get; init; } = [];

    /// <summary>Samples per second at the median run time, to 0.1.</summary>
    public double SamplesPerSecond => P50Ms > 0 ? Math.Round(Batch * 1000.0 / P50Ms, 1) : 0;

    /// <summary>The run times spread so much that p50 may mislead (p90 above 1.5 x p50).</summary>
    [JsonIgnore]
    public bool Noisy => P90Ms > NoisyRatio * P50Ms;

    /// <summary>Times to 0.1 microsecond, as records hold them.</summary>
    public LatencyStats Rounded() => this with
    {
        MinMs = Math.Round(MinMs, 4), P50Ms = Math.Round(P50Ms, 4), P90Ms = Math.Round(P90Ms, 4),
        MeanMs = Math.Round(MeanMs, 4), StdMs = Math.Round(StdMs, 4),
    };

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

/// <summary>A latency measurement with everything needed to reproduce it (JSON: threads, onnxruntime, processor, batches).</summary>
public sealed record LatencyReport(
    [property: JsonPropertyOrder(3)] IReadOnlyList<LatencyStats> Batches,
    [property: JsonPropertyOrder(0)] int Threads,
    [property: JsonPropertyOrder(1), JsonPropertyName("onnxruntime")] string RuntimeVersion,
    [property: JsonPropertyOrder(2)] string Processor)
{
    public LatencyStats? AtBatch(int batch) => Batches.FirstOrDefault(b => b.Batch == batch);

    /// <summary>Times to 0.1 microsecond, as records hold them (so that a record read back equals the one written).</summary>
    public LatencyReport Rounded() => this with { Batches = Batches.Select(b => b.Rounded() with { OutputShape = b.OutputShape }).ToList() };
}
