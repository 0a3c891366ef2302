using BenchmarkDotNet.Attributes;
using CellCompiler.Input;
using CellCompiler.Spaces;

namespace CellCompiler.Bench;

/// <summary>
/// `cellc space` in process (issue 13): exact enumeration of the 15,625-genotype space (a 4-node cell
/// over none, identity, conv1x1, conv3x3, avgpool3x3; target under 5 s on 2 cores), and 2,000 uniform
/// samples of the two-level example. The 1,000,000-genotype target is a whole-process run with
/// its peak memory: bench/space-enumeration.sh.
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
[SimpleJob(warmupCount: 1, iterationCount: 5)]
public class SpaceBenchmarks
{
    private SearchSpace _fiveOps = null!;
    private SearchSpace _twoLevels = null!;

    [Params(1, 2)]
    public int Workers { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _fiveOps = SpaceReader.Parse("""
            {"format":"space/1","levels":[{"nodes":4,"ops":["none","identity","conv1x1","conv3x3","avgpool3x3"]}]}
            """, "five.json", "five");
        _twoLevels = SpaceReader.Parse("""
            {"format":"space/1","primitives":{"wide5":{"kind":"sepconv","kernel":5}},
             "levels":[{"nodes":4,"motifs":6,"ops":["conv1x1","dwconv3x3","wide5","maxpool3x3","identity","none"]},
                       {"nodes":5,"ops":["*","identity","none"]}]}
            """, "two.json", "two");
    }

    [Benchmark(Description = "enumerate 15,625 genotypes, concat")]
    public long EnumerateFiveOps() => SpaceEnumerator.Run(_fiveOps, MergeMode.Concat, Workers).Networks;

    [Benchmark(Description = "2,000 samples of the two-level example")]
    public long SampleTwoLevels() => SpaceSampler.Draw(_twoLevels, MergeMode.Concat, 2_000, seed: 1, Workers).LiveCount;
}
