using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>
/// Everything that decides a candidate's check result. Latency null: not measured.
/// <see cref="MaxRunNodes"/> bounds the time and memory of a smoke run: ONNX Runtime's session set-up
/// grows faster than linearly with the node count (a network of 100,000 nodes took minutes and
/// gigabytes), so a larger network is compiled and counted but not run, and reported as
/// `over_budget` ("too large to run here"). <see cref="MaxRunMacs"/> does the same for the forward
/// passes' arithmetic, known before anything runs, and <see cref="MaxRunSeconds"/> stops a smoke test
/// that still takes too long (an `over_budget` of the same kind). A candidate already over a budget that needs no run is
/// not run either, unless <see cref="RunOverBudget"/> asks for it, so that "works, but exceeds a
/// budget" can be true when reported. With <see cref="LatencyTablePath"/> every compiled
/// candidate gets a predicted latency; <see cref="Static"/> checks without ONNX Runtime: compile in
/// memory (no weights, no ONNX bytes), figures, budgets and the prediction.
/// </summary>
public sealed record CheckOptions(
    Skeleton Skeleton,
    CompileOptions Compile,
    Budgets Budgets,
    int TrainBatch = CheckOptions.DefaultTrainBatch,
    LatencySettings? Latency = null,
    int MaxRunNodes = CheckOptions.DefaultMaxRunNodes,
    bool RunOverBudget = false)
{
    public const int DefaultTrainBatch = 64;

    /// <summary>Default bound on ONNX nodes run per candidate (see the README's reliability section for the measurement).</summary>
    public const int DefaultMaxRunNodes = 10_000;

    /// <summary>
    /// Default bound on multiply-accumulates per sample run per candidate: 100 G, about 25 times a
    /// 224x224 ResNet-50 (4.1 G in torchvision's published model table, from memory); the smoke test runs three samples, some seconds on one core.
    /// </summary>
    public const long DefaultMaxRunMacs = 100_000_000_000;

    /// <summary>Default time a smoke test may take (session and forward passes) before it is stopped.</summary>
    public const double DefaultMaxRunSeconds = 120;

    /// <summary>Networks of more multiply-accumulates per sample are compiled and counted but not run (`--max-run-macs`).</summary>
    public long MaxRunMacs { get; init; } = DefaultMaxRunMacs;

    /// <summary>A smoke test still running after this many seconds is stopped and reported too large to run here (`--max-run-seconds`).</summary>
    public double MaxRunSeconds { get; init; } = DefaultMaxRunSeconds;

    /// <summary>Latency is measured when asked for, or when a latency budget needs it.</summary>
    public LatencySettings? EffectiveLatency => Latency ?? (Budgets.NeedsLatency ? LatencySettings.Default : null);

    /// <summary>The latency table to predict from (`--latency-table`); null: no prediction.</summary>
    public string? LatencyTablePath { get; init; }

    /// <summary>Intra-op threads the prediction is for; the table must have been calibrated with as many.</summary>
    public int PredictionThreads { get; init; } = 1;

    /// <summary>No ONNX Runtime session for the candidates: `ok` means "compiles and fits".</summary>
    public bool Static { get; init; }
}
