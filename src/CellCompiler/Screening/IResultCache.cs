using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>Stores evaluations and latency measurements under keys that hold everything they depend on.</summary>
public interface IResultCache
{
    Evaluation? FindEvaluation(string key);
    void StoreEvaluation(string key, Evaluation evaluation);
    LatencyReport? FindLatency(string key);
    void StoreLatency(string key, LatencyReport latency);
}
