using System.Text.RegularExpressions;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Prediction;
using CellCompiler.Tests.Support;
using CellCompiler.Vocabulary;

namespace CellCompiler.Tests;

/// <summary>
/// The prediction's arithmetic against a hand-built table: a genotype whose units are counted by
/// hand, times made of powers of two so that every sum is exact, and the census checked against the
/// compiled model as the ONNX reference library (Debian's python3-onnx) reads it.
/// </summary>
public sealed partial class PredictionArithmeticTests
{
    /// <summary>
    /// Motif a: conv3x3, sepconv3x3, conv1x1, maxpool3x3 and two merges of 2 (nodes 2 and 3).
    /// Motif b: avgpool3x3, conv3x3, dwconv3x3, maxpool3x3 and one merge of 3 (node 3); identity 0->2.
    /// Cell: a (0->1), b (1->3), a (0->3), and a (2->3) from node 2, which has no input: dead, not counted.
    /// Hand count per cell: conv3x3 2+1 = 3, sepconv3x3 2, conv1x1 2, maxpool3x3 2+1 = 3, avgpool3x3 1,
    /// dwconv3x3 1, merges of 2: 2+2+1 (the cell's node 3) = 5, merges of 3: 1.
    /// </summary>
    public const string HandCounted = """
        {"format": "genotype/1", "name": "tidepool-counted", "levels": [
          {"nodes": 4, "motifs": {
            "a": {"edges": [[0, 1, "conv3x3"], [0, 2, "sepconv3x3"], [1, 2, "conv1x1"], [1, 3, "identity"], [2, 3, "maxpool3x3"]]},
            "b": {"edges": [[0, 1, "avgpool3x3"], [0, 2, "identity"], [1, 3, "conv3x3"], [2, 3, "dwconv3x3"], [0, 3, "maxpool3x3"]]}}},
          {"nodes": 4, "motifs": {
            "cell": {"edges": [[0, 1, "a"], [1, 3, "b"], [0, 3, "a"], [2, 3, "a"]]}}}]}
        """;

    /// <summary>Per-unit times at the last stage; the earlier stages' are 2x and 4x. Multiples of 1/16, so sums are exact.</summary>
    public static readonly IReadOnlyDictionary<string, double> BaseMs = new Dictionary<string, double>
    {
        ["conv3x3"] = 8, ["sepconv3x3"] = 4, ["conv1x1"] = 2, ["maxpool3x3"] = 1, ["avgpool3x3"] = 0.5, ["dwconv3x3"] = 0.25,
    };

    public const double Merge2Ms = 0.125, Merge3Ms = 0.0625;

    /// <summary>stem 1 + reductions 2 and 4 + head 8 + run 16.</summary>
    public const double FrameMs = 31;

    /// <summary>One cell at multiplier 1: 3*8 + 2*4 + 2*2 + 3*1 + 0.5 + 0.25 + 5*0.125 + 0.0625.</summary>
    public const double CellMs = 24 + 8 + 4 + 3 + 0.5 + 0.25 + 0.625 + 0.0625;

    /// <summary>A table for every unit of the hand-counted genotype on <paramref name="skeleton"/> (stage t at 2^(stages-1-t) x the base times).</summary>
    public static LatencyTable HandTable(Skeleton skeleton, TableConditions? conditions = null)
    {
        var frame = NetworkFrame.Of(skeleton);
        var units = new Dictionary<string, double>
        {
            [frame.Stem.Key] = 1, [frame.Head.Key] = 8, [RunUnit.Instance.Key] = 16,
        };
        for (var t = 0; t < frame.Reductions.Count; t++) units[frame.Reductions[t].Key] = 2 << t;
        for (var t = 0; t < frame.Stages.Count; t++)
        {
            var scale = 1 << (frame.Stages.Count - 1 - t);
            foreach (var (name, ms) in BaseMs)
                units[new PrimitiveUnit(BuiltinPrimitives.Find(name)!, frame.Stages[t]).Key] = ms * scale;
            units[new MergeUnit(skeleton.Merge, 2, frame.Stages[t]).Key] = Merge2Ms * scale;
            units[new MergeUnit(skeleton.Merge, 3, frame.Stages[t]).Key] = Merge3Ms * scale;
        }
        return new LatencyTable(conditions ?? TableConditions.Here(1, Onnx.OnnxVersions.DefaultOpset),
            units.Select(kv => new KeyValuePair<string, UnitTime>(kv.Key, new UnitTime(kv.Value, "by hand", DateTimeOffset.UnixEpoch, null))));
    }

    private static double Predict(Genotype genotype, Skeleton skeleton) =>
        LatencyPredictor.InMemory(HandTable(skeleton)).Predict(genotype, Liveness.Analyse(genotype), skeleton);

    [Fact]
    public void ProxyPredictionIsTheHandSum()
    {
        var genotype = GenotypeReader.Parse(HandCounted, "counted", "counted");
        // proxy: one cell per stage at multipliers 4, 2, 1.
        Assert.Equal(FrameMs + CellMs * (4 + 2 + 1), Predict(genotype, SkeletonPresets.All["proxy"]));
        Assert.Equal(314.0625, FrameMs + CellMs * 7);
    }

    [Fact]
    public void AFittedTablePredictsThroughItsLine()
    {
        // The hand sum of 314.0625 ms through predicted = 1.5 ms + 1.2 x sum: 1.5 + 376.875 = 378.375.
        var genotype = GenotypeReader.Parse(HandCounted, "counted", "counted");
        var skeleton = SkeletonPresets.All["proxy"];
        var fit = new NetworkFit(1.5, 1.2, 12, 3.0, "by hand", DateTimeOffset.UnixEpoch, null, skeleton.ToJson());
        var predictor = LatencyPredictor.InMemory(HandTable(skeleton).WithFit(fit));
        Assert.Equal(378.375, predictor.Predict(genotype, Liveness.Analyse(genotype), skeleton));
        // The fit was made for proxy: a table holding full's units too predicts full by the plain sum.
        var full = SkeletonPresets.All["full"];
        var both = LatencyPredictor.InMemory(HandTable(skeleton).With(HandTable(full).Units, replace: false).WithFit(fit));
        Assert.Equal(FrameMs + CellMs * (4 + 2 + 1) * 2, both.Predict(genotype, Liveness.Analyse(genotype), full));
        // A fit with an intercept below zero (a hand-made table may hold one) never predicts a negative time.
        Assert.Equal(0, new NetworkFit(-2, 1.1, 12, 3.0, "by hand", DateTimeOffset.UnixEpoch, null, skeleton.ToJson()).Apply(1));
    }

    [Fact]
    public void TheRatioThroughPointsOnALineThroughZeroIsItsSlope()
    {
        // (1, 1.2), (2, 2.4), (5, 6.0) lie on y = 1.2 x: any least squares through 0 returns 1.2, with no error.
        var line = NetworkFit.Line([(1, 1.2), (2, 2.4), (5, 6.0)])!.Value;
        Assert.Equal(0, line.Intercept);
        Assert.Equal(1.2, line.Slope, 9);
        Assert.Equal(0, line.MeanAbsoluteErrorPercent, 9);
        // Too few points, or no positive sum, fit nothing.
        Assert.Null(NetworkFit.Line([(1, 2), (2, 3)]));
        Assert.Null(NetworkFit.Line([(0, 2), (0, 3), (-1, 4)]));
    }

    [Fact]
    public void TheRatioMinimisesRelativeErrorAsNumpyDoes()
    {
        // Outside reference: minimising the sum of ((b x - y) / y)^2 is least squares of the column x / y
        // against ones; numpy.linalg.lstsq solves it (numpy from Debian's python3-numpy, which python3-torch brings).
        (double, double)[] points = [(0.29, 0.39), (0.54, 0.73), (0.76, 0.88), (0.99, 1.35), (1.23, 1.42), (1.56, 2.00)];
        var line = NetworkFit.Line(points)!.Value;
        var script = "import numpy, json, sys; p = numpy.array(json.loads(sys.argv[1])); a = (p[:, 0] / p[:, 1]).reshape(-1, 1); " +
                     "print(json.dumps(float(numpy.linalg.lstsq(a, numpy.ones(len(p)), rcond=None)[0][0])))";
        var json = "[" + string.Join(",", points.Select(p => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"[{p.Item1},{p.Item2}]"))) + "]";
        var result = ProcessRunner.Run(PythonReference.Python, ["-c", script, json]);
        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.Equal(double.Parse(result.Stdout, System.Globalization.CultureInfo.InvariantCulture), line.Slope, 9);
    }

    [Fact]
    public void CellCountsOfEachStageMultiply()
    {
        var genotype = GenotypeReader.Parse(HandCounted, "counted", "counted");
        // full: two cells per stage at 64, 128 and 256 channels.
        Assert.Equal(FrameMs + CellMs * (4 + 2 + 1) * 2, Predict(genotype, SkeletonPresets.All["full"]));
        var mixed = SkeletonPresets.All["proxy"] with { Stages = [new StageSpec(3, 16), new StageSpec(1, 32), new StageSpec(2, 64)] };
        Assert.Equal(FrameMs + CellMs * (3 * 4 + 1 * 2 + 2 * 1), Predict(genotype, mixed));
    }

    [Fact]
    public void SumMergesAreTheirOwnUnits()
    {
        var genotype = GenotypeReader.Parse(HandCounted, "counted", "counted");
        var sum = SkeletonPresets.All["proxy"] with { Merge = MergeMode.Sum };
        Assert.Equal(FrameMs + CellMs * 7, Predict(genotype, sum));
        Assert.Contains("merge sum/2 @16x32x32", HandTable(sum).Units.Keys);
        Assert.DoesNotContain("merge concat/2 @16x32x32", HandTable(sum).Units.Keys);
    }

    [Fact]
    public void ADeclaredPrimitiveIsKnownByItsDefinition()
    {
        // "big3" is conv3x3 spelled as a declaration, so it is the same unit (contract 3.1: built-ins are declarations).
        var respelled = HandCounted.Replace("\"levels\"", "\"primitives\": {\"big3\": {\"kind\": \"conv\", \"kernel\": 3, \"act\": \"relu\"}}, \"levels\"")
            .Replace("[[0, 1, \"conv3x3\"]", "[[0, 1, \"big3\"]");
        var genotype = GenotypeReader.Parse(respelled, "respelled", "respelled");
        Assert.Equal(FrameMs + CellMs * 7, Predict(genotype, SkeletonPresets.All["proxy"]));
    }

    [Fact]
    public void CensusCountsWhatTheHandCountSays()
    {
        var genotype = GenotypeReader.Parse(HandCounted, "counted", "counted");
        var census = CellCensus.Of(genotype, Liveness.Analyse(genotype), MergeMode.Concat);
        var byName = census.Primitives.ToDictionary(kv => BuiltinPrimitives.NameOf(kv.Key)!, kv => kv.Value);
        Assert.Equal(new Dictionary<string, long>
        {
            ["conv3x3"] = 3, ["sepconv3x3"] = 2, ["conv1x1"] = 2, ["maxpool3x3"] = 3, ["avgpool3x3"] = 1, ["dwconv3x3"] = 1,
        }, byName);
        Assert.Equal(new Dictionary<int, long> { [2] = 5, [3] = 1 }, census.Merges);
    }

    [Fact]
    public void AMissingUnitIsNamed()
    {
        var genotype = GenotypeReader.Parse(HandCounted, "counted", "counted");
        var skeleton = SkeletonPresets.All["proxy"];
        var table = HandTable(skeleton);
        var without = new LatencyTable(table.Conditions, table.Units.Where(kv => kv.Key != "primitive conv(kernel=1,dilation=1,act=relu) @32x16x16"));
        var predictor = LatencyPredictor.InMemory(without);
        var counts = predictor.Count(genotype, Liveness.Analyse(genotype), skeleton);
        Assert.Equal(["primitive conv(kernel=1,dilation=1,act=relu) @32x16x16"], predictor.Missing(counts).Select(u => u.Key));
        var error = Assert.Throws<InvalidOperationException>(() => predictor.Sum(counts));
        Assert.Contains("conv(kernel=1", error.Message);
    }

    /// <summary>
    /// The census, made from the genotype without lowering it, against the compiled model as the ONNX
    /// reference library reads it: per stage, the merges (Concat or Sum nodes) by their input count,
    /// and the applications of each primitive (distinct node-name prefixes ending in an edge that
    /// applies it). Over random genotypes with motifs used several times and dead code.
    /// </summary>
    [Theory]
    [InlineData(MergeMode.Concat)]
    [InlineData(MergeMode.Sum)]
    public void CensusMatchesTheCompiledModelAsOnnxReadsIt(MergeMode merge)
    {
        using var folder = new TempFolder();
        var skeleton = SkeletonPresets.All["proxy"] with { Merge = merge, Stages = [new StageSpec(2, 8), new StageSpec(1, 16)] };
        var cases = new List<(string Path, Genotype Genotype)>();
        for (var seed = 0; seed < 12; seed++)
        {
            var genotype = RandomGenotypes.Parse(seed);
            if (!Liveness.Analyse(genotype).Cell(genotype).OutputIsLive) continue;
            var path = folder.File($"g{seed}.onnx");
            File.WriteAllBytes(path, Compiler.Compile(genotype, skeleton).OnnxBytes);
            cases.Add((path, genotype));
        }
        Assert.True(cases.Count >= 8, "most random genotypes have a live cell");
        const string Reader = "import json, sys, onnx\n" +
                              "for path in sys.argv[1:]:\n" +
                              "    model = onnx.load(path)\n" +
                              "    print(json.dumps({'path': path, 'nodes': [[n.name, n.op_type, len(n.input)] for n in model.graph.node]}))\n";
        var result = ProcessRunner.Run(PythonReference.Python, new[] { "-c", Reader }.Concat(cases.Select(c => c.Path)));
        Assert.True(result.ExitCode == 0, $"the ONNX reference reader failed (python3-onnx installed?): {result.Stderr}");
        var lines = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => System.Text.Json.JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(cases.Count, lines.Count);
        foreach (var (line, (_, genotype)) in lines.Zip(cases))
        {
            var census = CellCensus.Of(genotype, Liveness.Analyse(genotype), merge, asRun: false);
            var nodes = line.GetProperty("nodes").EnumerateArray().Select(n => (Name: n[0].GetString()!, Type: n[1].GetString()!, Inputs: n[2].GetInt32())).ToList();
            foreach (var (stage, cells) in new[] { (0, 2), (1, 1) })
            {
                var inStage = nodes.Where(n => n.Name.StartsWith($"stage{stage}/", StringComparison.Ordinal)).ToList();
                var mergeType = merge == MergeMode.Concat ? "Concat" : "Sum";
                var merges = inStage.Where(n => n.Type == mergeType).GroupBy(n => n.Inputs).ToDictionary(g => g.Key, g => (long)g.Count());
                Assert.Equal(census.Merges.ToDictionary(kv => kv.Key, kv => kv.Value * cells).OrderBy(kv => kv.Key), merges.OrderBy(kv => kv.Key));
                var applications = inStage
                    .Select(n => LastPrimitiveEdge().Match(n.Name))
                    .Where(m => m.Success && genotype.Primitives.IsPrimitive(m.Groups["op"].Value))
                    .Select(m => (Prefix: m.Groups["prefix"].Value, Op: m.Groups["op"].Value))
                    .Distinct()
                    .GroupBy(a => genotype.Primitives.Get(a.Op))
                    .ToDictionary(g => g.Key.Key, g => (long)g.Count());
                Assert.Equal(census.Primitives.ToDictionary(kv => kv.Key.Key, kv => kv.Value * cells).OrderBy(kv => kv.Key, StringComparer.Ordinal),
                    applications.OrderBy(kv => kv.Key, StringComparer.Ordinal));
            }
        }
    }

    /// <summary>
    /// The census as run against what ONNX Runtime runs, read from its own profiler: per stage, the
    /// pooling kernels (MaxPool, AveragePool) of the optimized session. The runtime's common-subexpression
    /// elimination runs a pooling applied twice to one tensor once; the census must count those once
    /// too, while the compiled model (the census with asRun false) holds every application.
    /// </summary>
    [Fact]
    public void CensusAsRunMatchesTheKernelsOnnxRuntimeRuns()
    {
        var skeleton = SkeletonPresets.All["proxy"] with { Stages = [new StageSpec(2, 8), new StageSpec(1, 16)] };
        var shared = 0;
        var checkedCases = 0;
        for (var seed = 0; seed < 40 && checkedCases < 12; seed++)
        {
            var genotype = RandomGenotypes.Parse(seed);
            var liveness = Liveness.Analyse(genotype);
            if (!liveness.Cell(genotype).OutputIsLive) continue;
            long Pools(CellCensus c) => c.Primitives.Where(kv => !kv.Key.Trainable).Sum(kv => kv.Value);
            var asRun = Pools(CellCensus.Of(genotype, liveness, skeleton.Merge));
            var emitted = Pools(CellCensus.Of(genotype, liveness, skeleton.Merge, asRun: false));
            if (emitted == 0) continue;
            checkedCases++;
            if (asRun < emitted) shared++;
            var profile = Runtime.KernelProfile.Collect(Compiler.Compile(genotype, skeleton).OnnxBytes, 1, 1, 1, 1);
            foreach (var (stage, cells) in new[] { (0, 2), (1, 1) })
            {
                var kernels = profile.OpTypeByNode.Count(kv => kv.Key.StartsWith($"stage{stage}/", StringComparison.Ordinal) && kv.Value is "MaxPool" or "AveragePool");
                Assert.True(asRun * cells == kernels, $"seed {seed}, stage {stage}: the census counts {asRun * cells} poolings as run, ONNX Runtime ran {kernels} (the model holds {emitted * cells})");
            }
        }
        Assert.True(checkedCases >= 8, "most random genotypes have a live cell with a pooling");
        Assert.True(shared > 0, "some random genotype pools one tensor twice, so the runtime's sharing is exercised");
    }

    /// <summary>A node name up to its last edge segment "eN:op" (the application of a primitive), and that op.</summary>
    [GeneratedRegex(@"^(?<prefix>.*/e\d+:(?<op>[^/]+))/[^:]*$")]
    private static partial Regex LastPrimitiveEdge();
}
