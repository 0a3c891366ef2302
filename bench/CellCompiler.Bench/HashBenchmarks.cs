using BenchmarkDotNet.Attributes;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Sampling;

namespace CellCompiler.Bench;

/// <summary>Canonical hashing of 11-node flat cells (target: well under 10 ms per genotype).</summary>
[MemoryDiagnoser]
[MedianColumn]
[SimpleJob(warmupCount: 3, iterationCount: 10)]
public class HashBenchmarks
{
    private List<Genotype> _flat = null!;
    private Genotype _fixture = null!;

    [GlobalSetup]
    public void Setup()
    {
        _flat = new GenotypeSampler([11], [1], seed: 5).Sample(100).ToList();
        _fixture = GenotypeReader.ReadFile(Path.Combine(CompileBenchmarks.FindRepoRoot(), "fixtures", "tidepool-flat11.json"));
    }

    [Benchmark(Description = "100 sampled 11-node flat cells")]
    public int Sampled100() => _flat.Sum(g => GenotypeHasher.Hash(g).Length);

    [Benchmark(Description = "fixture tidepool-flat11")]
    public string Fixture() => GenotypeHasher.Hash(_fixture);
}
