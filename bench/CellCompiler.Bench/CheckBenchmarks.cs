using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Jobs;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Bench;

/// <summary>
/// `check` without latency, per candidate: compile, create an ONNX Runtime session from the bytes,
/// two forward passes (batch 1 and 2), budgets. Pinned to one core (affinity mask 1).
/// Issue target: proxy preset under 150 ms median per candidate.
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

    [Params("tidepool-h3.json", "tidepool-flat11.json")]
    public string Fixture { get; set; } = "tidepool-h3.json";

    [GlobalSetup]
    public void Setup()
    {
        var genotype = GenotypeReader.ReadFile(Path.Combine(CompileBenchmarks.FindRepoRoot(), "fixtures", Fixture));
        _candidate = Candidate.Valid(genotype.Name, genotype);
        _options = new CheckOptions(SkeletonPresets.All["proxy"], CompileOptions.Default, Budgets.None);
    }

    [Benchmark]
    public CheckStatus Check() => CandidateChecker.Check(_candidate, _options).Status;
}
