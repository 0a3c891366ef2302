using BenchmarkDotNet.Attributes;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Sampling;
using CellCompiler.Tests;

namespace CellCompiler.Bench;

/// <summary>
/// Canonical hashing. Sampled 11-node flat cells (the everyday case; target: at most 2x the 58 us
/// per cell measured before the hash became exact) and the worst cases of
/// tests/CellCompiler.Tests/HashStressGenotypes.cs, symmetric genotypes at the contract's limits
/// (target: under 1 s each), under both merge modes.
/// </summary>
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

/// <summary>One symmetric worst case per run, liveness included (it is part of hashing a parsed genotype).</summary>
[MemoryDiagnoser]
[MedianColumn]
[SimpleJob(warmupCount: 2, iterationCount: 8)]
public class HashStressBenchmarks
{
    private Genotype _genotype = null!;

    public static IEnumerable<string> Names => HashStressGenotypes.All().Select(c => c.Name);

    [ParamsSource(nameof(Names))]
    public string Case { get; set; } = "";

    [Params(MergeMode.Concat, MergeMode.Sum)]
    public MergeMode Merge { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var json = HashStressGenotypes.All().Single(c => c.Name == Case).Json;
        _genotype = GenotypeReader.Parse(json, Case, Case);
    }

    [Benchmark(Description = "symmetric worst case")]
    public string Stress() => GenotypeHasher.NetworkHash(_genotype, Liveness.Analyse(_genotype), Merge);
}
