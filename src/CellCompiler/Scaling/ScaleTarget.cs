using CellCompiler.Input;

namespace CellCompiler.Scaling;

/// <summary>One size to compile a cell at: a label a person can read and the resolved skeleton.</summary>
public sealed record ScaleTarget(string Label, Skeleton Skeleton);

/// <summary>What a cell costs at one target; Latency null when not measured.</summary>
public sealed record ScaleRow(
    ScaleTarget Target,
    long Params,
    long Macs,
    long PeakActivationBytes,
    long TrainMemoryBytes,
    long OnnxBytes,
    Runtime.LatencyStats? Latency);
