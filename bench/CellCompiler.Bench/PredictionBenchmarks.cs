using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Jobs;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Prediction;
using CellCompiler.Runtime;
using CellCompiler.Screening;

namespace CellCompiler.Bench;

/// <summary>
/// What a predicted latency costs against a measured one, per candidate, pinned to one core (affinity
/// mask 1). Baseline: measuring the candidate's latency as `check --latency` does (compile to ONNX
/// bytes, an ONNX Runtime session, 10 warm-up and 50 timed runs at batch 1). Compared: `check
/// --static --latency-table` (hash, compile without weights or bytes, figures, budgets, unit census,
/// table sum) and the prediction alone. Issue target: the static check at most 1/100 of the baseline,
/// read in the Ratio column. The table is filled in the set-up (units measured once, in memory).
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
[Config(typeof(OneCore))]
public class PredictionBenchmarks
{
    private sealed class OneCore : ManualConfig
    {
        public OneCore() => AddJob(Job.Default.WithAffinity(1).WithWarmupCount(2).WithIterationCount(10));
    }

    private Genotype _genotype = null!;
    private Candidate _candidate = null!;
    private Skeleton _skeleton = null!;
    private LatencyPredictor _predictor = null!;
    private CandidateChecker _static = null!;

    [Params("tidepool-h3.json", "tidepool-flat11.json")]
    public string Fixture { get; set; } = "tidepool-h3.json";

    [GlobalSetup]
    public void Setup()
    {
        _genotype = GenotypeReader.ReadFile(Path.Combine(CompileBenchmarks.FindRepoRoot(), "fixtures", Fixture));
        _candidate = Candidate.Valid(_genotype.Name, _genotype);
        _skeleton = SkeletonPresets.All["proxy"];
        _predictor = LatencyPredictor.InMemory(new LatencyTable(TableConditions.Here(1, Onnx.OnnxVersions.DefaultOpset), []));
        _predictor.Predict(_genotype, Liveness.Analyse(_genotype), _skeleton); // measures the units once
        var options = new CheckOptions(_skeleton, CompileOptions.Default, Budgets.None) { Static = true };
        _static = new CandidateChecker(options, predictor: _predictor);
    }

    [Benchmark(Baseline = true)]
    public double MeasureLatency() =>
        LatencyMeter.Measure(Compiler.Compile(_genotype, _skeleton).OnnxBytes, LatencySettings.Default).Batches[0].P50Ms;

    [Benchmark]
    public double? StaticCheckWithPrediction() => _static.Check(_candidate).LatencyPredictedMs;

    [Benchmark]
    public double PredictionAlone() => _predictor.Predict(_genotype, Liveness.Analyse(_genotype), _skeleton);
}
