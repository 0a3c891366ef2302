using BenchmarkDotNet.Attributes;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Sampling;
using CellCompiler.Screening;

namespace CellCompiler.Bench;

/// <summary>
/// Population screening throughput, in-process, on this machine's cores (2 workers): sampled
/// genotypes (`cellc sample --levels 4,5 --motifs 6,1`), proxy preset, no latency.
/// Targets: at least 1,000 candidates per minute compiled and smoke-tested; at least 20,000 per
/// minute answered from the cache. Candidates per minute = 60 s / (time per operation / candidates).
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
[SimpleJob(warmupCount: 1, iterationCount: 5)]
public class ScreeningBenchmarks
{
    public const int FreshCandidates = 100;
    public const int CachedCandidates = 1000;

    private List<Candidate> _fresh = null!;
    private List<Candidate> _cachedPopulation = null!;
    private CheckOptions _options = null!;
    private string _cacheFile = null!;
    private SqliteResultCache _cache = null!;

    [GlobalSetup]
    public void Setup()
    {
        var sampler = new GenotypeSampler([4, 5], [6, 1], seed: 11);
        _fresh = sampler.Sample(FreshCandidates).Select(g => Candidate.Valid(g.Id ?? g.Name, g)).ToList();
        _options = new CheckOptions(SkeletonPresets.All["proxy"], CompileOptions.Default, Budgets.None);

        // The cached population: 1,000 candidates whose answers are all in the cache already.
        var cachedSampler = new GenotypeSampler([4, 5], [6, 1], seed: 12);
        _cachedPopulation = cachedSampler.Sample(CachedCandidates).Select(g => Candidate.Valid(g.Id ?? g.Name, g)).ToList();
        _cacheFile = Path.Combine(Path.GetTempPath(), $"cellc-bench-{Environment.ProcessId}.db");
        _cache = SqliteResultCache.Open(_cacheFile, warning => throw new InvalidOperationException(warning));
        Screen(_cachedPopulation, new CandidateChecker(_options, _cache));
    }

    [GlobalCleanup]
    public void Cleanup()
    {
        _cache.Dispose();
        foreach (var suffix in new[] { "", "-wal", "-shm" })
            File.Delete(_cacheFile + suffix);
    }

    private static int Screen(List<Candidate> candidates, CandidateChecker checker)
    {
        var count = 0;
        ScreeningRun.Execute(candidates, _ => true, checker.Check, new RunSettings(Environment.ProcessorCount, Ordered: false), _ => count++);
        return count;
    }

    [Benchmark(Description = "100 fresh candidates (compile + ONNX Runtime smoke test), no cache")]
    public int Fresh() => Screen(_fresh, new CandidateChecker(_options));

    [Benchmark(Description = "1000 candidates answered from the cache")]
    public int Cached() => Screen(_cachedPopulation, new CandidateChecker(_options, _cache));
}
