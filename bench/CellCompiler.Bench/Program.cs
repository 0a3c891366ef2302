using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Running;

namespace CellCompiler.Bench;

public static class Program
{
    public static void Main(string[] args)
    {
        // Keep results under bench/ whatever the working directory; --artifacts on the command line still wins.
        var artifacts = Path.Combine(CompileBenchmarks.FindRepoRoot(), "bench", "BenchmarkDotNet.Artifacts");
        BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly)
            .Run(args, DefaultConfig.Instance.WithArtifactsPath(artifacts));
    }
}
