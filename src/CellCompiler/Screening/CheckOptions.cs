using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>Everything that decides a candidate's check result. Latency null: not measured.</summary>
public sealed record CheckOptions(
    Skeleton Skeleton,
    CompileOptions Compile,
    Budgets Budgets,
    int TrainBatch = CheckOptions.DefaultTrainBatch,
    LatencySettings? Latency = null,
    long? RunMemoryLimitBytes = null)
{
    /// <summary>
    /// A candidate whose run would need more than this (default: a quarter of the memory available to
    /// the process) is not run: it is reported as over budget instead of risking the machine.
    /// </summary>
    public long EffectiveRunMemoryLimit => RunMemoryLimitBytes ?? GC.GetGCMemoryInfo().TotalAvailableMemoryBytes / 4;

    public const int DefaultTrainBatch = 64;

    /// <summary>Latency is measured when asked for, or when a latency budget needs it.</summary>
    public LatencySettings? EffectiveLatency => Latency ?? (Budgets.NeedsLatency ? LatencySettings.Default : null);
}
