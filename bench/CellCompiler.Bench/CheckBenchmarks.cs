using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Jobs;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Runtime;
using CellCompiler.Screening;
using Microsoft.ML.OnnxRuntime;

namespace CellCompiler.Bench;

/// <summary>
/// `check` without latency, per candidate: compile, create an ONNX Runtime session from the bytes,
/// two forward passes (batch 1 and 2), budgets. Pinned to one core (affinity mask 1).
/// Issue target: proxy preset under 150 ms median per candidate, and (issue 10) half of what it
/// was with a fully optimized smoke session. The two Smoke benchmarks time the runtime stage alone
/// on the compiled bytes, as `check` runs it (no graph optimizations) and fully optimized (as
/// before), so that one run shows where the difference comes from under the same conditions.
/// These are wall-clock figures: on a machine loaded by other work they do not even order the two
/// smoke variants consistently, and the README's CPU-time comparison of alternating pinned processes
/// is the one to trust there.
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
[Config(typeof(OneCore))]
public class CheckBenchmarks
{
    private sealed class OneCore : ManualConfig
    {
        public OneCore() => AddJob(Job.Default.WithAffinity(1).WithWarmupCount(3).WithIterationCount(10));
    }

    private Candidate _candidate = null!;
    private CheckOptions _options = null!;
    private CompiledModel _model = null!;

    [Params("tidepool-h3.json", "tidepool-flat11.json")]
    public string Fixture { get; set; } = "tidepool-h3.json";

    [GlobalSetup]
    public void Setup()
    {
        var genotype = GenotypeReader.ReadFile(Path.Combine(CompileBenchmarks.FindRepoRoot(), "fixtures", Fixture));
        _candidate = Candidate.Valid(genotype.Name, genotype);
        _options = new CheckOptions(SkeletonPresets.All["proxy"], CompileOptions.Default, Budgets.None);
        _model = Compiler.Compile(genotype, _options.Skeleton);
    }

    [Benchmark(Baseline = true)]
    public CheckStatus Check() => CandidateChecker.Check(_candidate, _options).Status;

    [Benchmark]
    public bool SmokeAsWritten() => Smoke(ForwardPass.AsWritten);

    [Benchmark]
    public bool SmokeFullyOptimized() => Smoke(GraphOptimizationLevel.ORT_ENABLE_ALL);

    private bool Smoke(GraphOptimizationLevel level) =>
        SmokeTest.Run(_model.OnnxBytes, _model.InputShape.Dims, _model.OutputShape.Dims, 0, level).Works;
}
