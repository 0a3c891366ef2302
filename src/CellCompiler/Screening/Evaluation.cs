using CellCompiler.Figures;

namespace CellCompiler.Screening;

/// <summary>
/// What compiling and smoke-testing a genotype on a skeleton found, independent of budgets: the part
/// of a check that the cache keeps. Failure null means the model works. The verdict and the figures
/// but two belong to the network; the file size and the peak activation memory belong to the
/// spelling too (names, metadata, emitted order), which <see cref="Spelling"/> identifies.
/// </summary>
public sealed record Evaluation(
    CheckStatus? Failure,
    string? FailureReason,
    string? FailureKind,
    int[]? OutputShape,
    NetworkFigures? Figures,
    long? ActivationBytesPerSample,
    long? OnnxBytes,
    bool SmokeTested = true,
    string? Spelling = null)
{
    /// <summary>Compiled, and either passed the smoke test or was not run (see <see cref="SmokeTested"/>).</summary>
    public bool Works => Failure is null;
}
