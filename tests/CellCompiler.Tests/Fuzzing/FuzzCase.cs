using System.Text;
using System.Text.Json.Nodes;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Graph;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Rendering;
using CellCompiler.Sampling;
using CellCompiler.Screening;
using CellCompiler.Shapes;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests.Fuzzing;

/// <summary>What the CLI would do with an input: exit 0, exit 1 (dead cell) or exit 2 (bad input).</summary>
internal enum FuzzOutcome { Ok = 0, DeadCell = 1, BadInput = 2 }

/// <summary>One fuzz case: what it feeds the library, and a way to run it.</summary>
internal sealed record FuzzCase(string Kind, string Input, Func<FuzzOutcome> Run);

/// <summary>
/// Builds fuzz case number n of a seed from valid seeds (fixtures and sampled genotypes with declared
/// primitives) and runs each through the stages a command runs: parse and validate, skeleton and
/// overrides, lowering, shapes, figures, both hashes, the picture, and ONNX emission while the model
/// stays small (a large valid model is the emitter's business, tested elsewhere; here it would only
/// cost time). The mapping to outcomes is the CLI's: InputException and CompileException are bad
/// input, DeadCellException is exit 1; any other exception escapes and fails the test.
/// </summary>
internal static class FuzzCorpus
{
    private const long EmitBelowWeightBytes = 8 << 20;

    private static readonly Skeleton Tiny = new(new InputSpec(3, 8, 8), 3, new StemSpec("conv3x3", 1, false),
        [new StageSpec(1, 4), new StageSpec(1, 6)], "sepconv3x3", MergeMode.Concat);

    private static readonly Lazy<IReadOnlyList<string>> Genotypes = new(() =>
    {
        var seeds = new List<string>();
        foreach (var file in new[] { "tidepool-h3.json", "tidepool-flat11.json", "tidepool-vocab.json", "tidepool-bottleneck.json", "tidepool-deadcode.json" })
            seeds.Add(File.ReadAllText(RepoPaths.Fixture(file)));
        var primitives = PrimitiveDeclarations.Parse(Encoding.UTF8.GetBytes(
            """{"wide5":{"kind":"sepconv","kernel":5,"dilation":2},"bneck":{"kind":"mbconv","kernel":3,"expand":2,"se":0.25,"act":"hardswish"},"strip":{"kind":"factorized","kernel":5,"act":"relu6"}}"""),
            "fuzz primitives");
        var sampler = new GenotypeSampler([4, 3], [3, 1], 1, seed: 11, primitives: primitives);
        seeds.AddRange(sampler.Sample(25).Select(g => GenotypeJson.Serialize(g)));
        return seeds;
    });

    private static readonly Lazy<string> SkeletonSeed = new(() => File.ReadAllText(RepoPaths.Fixture("tidepool-skeleton.json")));

    public static FuzzCase Case(int seed, int n)
    {
        var raw = Build(seed, n);
        return raw with { Run = () => Guarded(raw.Run) };
    }

    /// <summary>The CLI's mapping of expected failures to exit codes; anything else escapes.</summary>
    private static FuzzOutcome Guarded(Func<FuzzOutcome> run)
    {
        try { return run(); }
        catch (InputException) { return FuzzOutcome.BadInput; }
        catch (CompileException) { return FuzzOutcome.BadInput; }
        catch (DeadCellException) { return FuzzOutcome.DeadCell; }
    }

    private static FuzzCase Build(int seed, int n)
    {
        var random = new Random(unchecked(seed * 1_000_003 + n));
        var mutator = new JsonMutator(random);
        var genotype = Genotypes.Value[random.Next(Genotypes.Value.Count)];
        switch (random.Next(20))
        {
            case < 8:
            {
                var text = MutatedJson(mutator, genotype, random.Next(1, 4));
                return new FuzzCase("genotype", text, () => Compile(Encoding.UTF8.GetBytes(text), Tiny));
            }
            case < 11:
            {
                var bytes = mutator.MutateBytes(Encoding.UTF8.GetBytes(genotype));
                return new FuzzCase("genotype bytes", Convert.ToBase64String(bytes), () => Compile(bytes, Tiny));
            }
            case < 14:
            {
                var text = MutatedJson(mutator, SkeletonSeed.Value, random.Next(1, 3));
                return new FuzzCase("skeleton", text, () =>
                {
                    var skeleton = SkeletonReader.Parse(Encoding.UTF8.GetBytes(text), "fuzz-skeleton.json");
                    return Compile(Encoding.UTF8.GetBytes(genotype), skeleton);
                });
            }
            case < 16:
            {
                var overrides = RandomOverrides(random);
                return new FuzzCase("overrides", overrides.ToString(), () => Compile(Encoding.UTF8.GetBytes(genotype), overrides.ApplyTo(Tiny)));
            }
            case < 18:
            {
                var line = random.Next(3) == 0
                    ? Encoding.UTF8.GetString(mutator.MutateBytes(Encoding.UTF8.GetBytes(genotype.ReplaceLineEndings(""))))
                    : MutatedJson(mutator, genotype, random.Next(1, 4));
                return new FuzzCase("population line", line, () => PopulationLine(line));
            }
            default:
            {
                var text = MutatedJson(mutator,
                    """{"wide5":{"kind":"sepconv","kernel":5},"bneck3":{"kind":"mbconv","kernel":3,"expand":6,"se":0.25,"act":"silu"},"pool5":{"kind":"maxpool","kernel":5}}""",
                    random.Next(1, 4));
                return new FuzzCase("primitives", text, () =>
                {
                    PrimitiveDeclarations.Parse(Encoding.UTF8.GetBytes(text), "fuzz-primitives.json");
                    return FuzzOutcome.Ok;
                });
            }
        }
    }

    private static string MutatedJson(JsonMutator mutator, string json, int rounds)
    {
        var root = JsonNode.Parse(json);
        var mutated = mutator.Mutate(root, rounds);
        return mutated?.ToJsonString() ?? "null";
    }

    private static SkeletonOverrides RandomOverrides(Random random)
    {
        int[] Pick(params int[] values) => Enumerable.Range(0, random.Next(1, 5)).Select(_ => values[random.Next(values.Length)]).ToArray();
        return new SkeletonOverrides(
            Input: random.Next(3) == 0 ? new InputSpec(Pick(0, 1, 3, 1025)[0], Pick(0, 1, 2, 8, 9000)[0], Pick(1, 3, 8, 9000)[0]) : null,
            Classes: random.Next(3) == 0 ? Pick(0, 1, 10, 1_000_001)[0] : null,
            Cells: random.Next(3) == 0 ? Pick(0, 1, 2, 65) : null,
            Channels: random.Next(3) == 0 ? Pick(0, 1, 3, 7, 16385) : null,
            WidthMultiplier: random.Next(3) == 0 ? new[] { 0.0, 1e-9, 0.5, 2.0, double.NaN, 1e12 }[random.Next(6)] : null,
            Merge: random.Next(3) == 0 ? (random.Next(2) == 0 ? MergeMode.Sum : MergeMode.Concat) : null,
            Reduction: random.Next(4) == 0 ? new[] { "conv3x3", "sepconv3x3", "maxpool3x3", "" }[random.Next(4)] : null);
    }

    /// <summary>The stages of `compile`, `check` and `render` for one genotype on one skeleton.</summary>
    private static FuzzOutcome Compile(byte[] genotypeBytes, Skeleton skeleton)
    {
        var genotype = GenotypeReader.Parse(genotypeBytes, "fuzz.json", "fuzz");
        var liveness = Liveness.Analyse(genotype);
        _ = CellRenderer.Svg(genotype);
        _ = GenotypeHasher.Hashes(genotype, liveness, MergeMode.Sum);
        var network = Lowerer.Lower(genotype, skeleton, liveness);
        var shaped = ShapeInference.Infer(network);
        var figures = FigureCounter.Count(shaped);
        if (figures.WeightBytes < EmitBelowWeightBytes)
            _ = Compiler.Compile(genotype, skeleton);
        return FuzzOutcome.Ok;
    }

    /// <summary>A population line is a candidate, valid or invalid, never an exception.</summary>
    private static FuzzOutcome PopulationLine(string line)
    {
        var candidate = PopulationReader.Parse(Encoding.UTF8.GetBytes(line), "fuzz.jsonl line 1", "line-1");
        if (candidate.Genotype is null)
        {
            if (candidate.Error is null) throw new InvalidOperationException("an invalid candidate without its error");
            return FuzzOutcome.BadInput;
        }
        var record = CandidateChecker.Check(candidate, new CheckOptions(Tiny, CompileOptions.Default, Budgets.None, MaxRunNodes: 0));
        return record.Status == CheckStatus.Invalid ? FuzzOutcome.BadInput : FuzzOutcome.Ok;
    }
}
