using BenchmarkDotNet.Attributes;
using CellCompiler.Compilation;
using CellCompiler.Input;

namespace CellCompiler.Bench;

/// <summary>
/// In-process compile of an already parsed genotype to serialized ONNX bytes
/// (lowering, shape inference, figures, weight generation, protobuf serialization).
/// Targets on a 2-core machine: tidepool-h3 (built-ins only) proxy &lt; 5 ms, full &lt; 50 ms,
/// full224 &lt; 500 ms; tidepool-bottleneck (inverted bottlenecks with squeeze-excitation) full224 &lt; 500 ms (median).
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
[SimpleJob(warmupCount: 3, iterationCount: 10)]
public class CompileBenchmarks
{
    private Genotype _genotype = null!;
    private Skeleton _skeleton = null!;

    [Params("proxy", "full", "full224")]
    public string Preset { get; set; } = "proxy";

    [Params("tidepool-h3", "tidepool-bottleneck")]
    public string Fixture { get; set; } = "tidepool-h3";

    [GlobalSetup]
    public void Setup()
    {
        var path = Path.Combine(FindRepoRoot(), "fixtures", Fixture + ".json");
        _genotype = GenotypeReader.ReadFile(path);
        _skeleton = SkeletonReader.Resolve(Preset);
    }

    [Benchmark]
    public byte[] Compile() => Compiler.Compile(_genotype, _skeleton).OnnxBytes;

    /// <summary>Walks up from the benchmark's base directory to the folder holding CellCompiler.sln.</summary>
    internal static string FindRepoRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
            if (File.Exists(Path.Combine(dir.FullName, "CellCompiler.sln")))
                return dir.FullName;
        throw new InvalidOperationException($"CellCompiler.sln not found above {AppContext.BaseDirectory}");
    }
}
