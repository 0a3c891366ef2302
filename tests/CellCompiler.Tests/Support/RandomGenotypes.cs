using System.Globalization;
using System.Text.Json;
using CellCompiler.Input;

namespace CellCompiler.Tests.Support;

/// <summary>
/// A test-only generator of random genotypes: random depth, node counts, motif counts and edge
/// sparsity, with `none` edges, unused motifs and dead code arising naturally. Deterministic per seed.
/// <see cref="JsonWithDeclarations"/> adds random declared primitives (contract 3.1) of every kind,
/// with every parameter drawn in its range or left to its default.
/// </summary>
public static class RandomGenotypes
{
    private static readonly string[] LevelZeroOps =
        ["identity", "conv1x1", "conv3x3", "dwconv3x3", "sepconv3x3", "maxpool3x3", "avgpool3x3", "none"];

    /// <summary>Contract 3.1: the kinds, and which parameters each takes besides the kernel.</summary>
    public static readonly IReadOnlyDictionary<string, string[]> KindParameters = new Dictionary<string, string[]>
    {
        ["conv"] = ["dilation", "act"],
        ["dwconv"] = ["dilation", "act"],
        ["sepconv"] = ["dilation", "repeat", "act"],
        ["factorized"] = ["act"],
        ["maxpool"] = [],
        ["avgpool"] = [],
        ["mbconv"] = ["expand", "se", "act"],
    };

    public static readonly string[] Activations = ["relu", "relu6", "silu", "hardswish", "none"];

    /// <summary>A genotype document (as JSON) with at most <paramref name="maxLevels"/> levels, built-in primitives only.</summary>
    public static string Json(int seed, int maxLevels = 3, int maxNodes = 6, double density = -1)
    {
        var random = new Random(seed);
        var levels = Levels(random, maxLevels, maxNodes, density, LevelZeroOps, []);
        return JsonSerializer.Serialize(new { format = "genotype/1", name = $"random-{seed}", levels });
    }

    public static Genotype Parse(int seed, int maxLevels = 3, int maxNodes = 6) =>
        GenotypeReader.Parse(Json(seed, maxLevels, maxNodes), $"random-{seed}", $"random-{seed}");

    /// <summary>
    /// A genotype with 1 to 4 random declared primitives beside the built-ins. Declared names weigh
    /// twice in the level-0 alphabet, and the chain edges of the first level-0 motif use each
    /// declaration once before anything else, so that nearly every declaration reaches the network.
    /// </summary>
    public static string JsonWithDeclarations(int seed, int maxLevels = 2, int maxNodes = 5)
    {
        var random = new Random(seed);
        var primitives = new Dictionary<string, Dictionary<string, object>>();
        var count = random.Next(1, 5);
        for (var d = 0; d < count; d++)
        {
            var declaration = RandomDeclaration(random);
            primitives[$"p{d}_{declaration["kind"]}"] = declaration;
        }
        var names = primitives.Keys.ToArray();
        var alphabet = LevelZeroOps.Concat(names).Concat(names).ToArray();
        var levels = Levels(random, maxLevels, maxNodes, -1, alphabet, names);
        return JsonSerializer.Serialize(new { format = "genotype/1", name = $"declared-{seed}", primitives, levels });
    }

    /// <summary>One declaration of a random kind; each parameter it takes is drawn in range or left out (its default).</summary>
    public static Dictionary<string, object> RandomDeclaration(Random random)
    {
        var kinds = KindParameters.Keys.ToArray();
        var kind = kinds[random.Next(kinds.Length)];
        var declaration = new Dictionary<string, object>
        {
            ["kind"] = kind,
            // Odd, 1 to 7 for conv; 3 to 7 for every other kind.
            ["kernel"] = kind == "conv" ? 1 + 2 * random.Next(4) : 3 + 2 * random.Next(3),
        };
        foreach (var parameter in KindParameters[kind])
        {
            if (random.Next(3) == 0) continue; // the default
            declaration[parameter] = parameter switch
            {
                "dilation" => random.Next(1, 5),
                "repeat" => random.Next(1, 3),
                "expand" => random.Next(1, 9),
                "se" => RandomSqueeze(random),
                "act" => Activations[random.Next(Activations.Length)],
                _ => throw new InvalidOperationException($"no range known for parameter {parameter}"),
            };
        }
        return declaration;
    }

    /// <summary>0 to 1: the ends, common ratios, and arbitrary two-decimal values (floor(C * se) then matters).</summary>
    private static double RandomSqueeze(Random random) => random.Next(4) switch
    {
        0 => 0.0,
        1 => 1.0,
        2 => new[] { 0.0625, 0.125, 0.25, 0.5 }[random.Next(4)],
        _ => Math.Round(random.NextDouble(), 2),
    };

    /// <summary>
    /// Declarations that together take every kind, every value of every integer parameter, every
    /// activation on every kind that has one, and squeeze ratios from 0 to 1, each spelled out.
    /// </summary>
    public static IReadOnlyList<(string Name, Dictionary<string, object> Declaration)> EveryKindAndParameter()
    {
        var list = new List<(string, Dictionary<string, object>)>();
        void Add(string name, params (string Key, object Value)[] fields) =>
            list.Add((name, fields.ToDictionary(f => f.Key, f => f.Value)));
        foreach (var k in new[] { 1, 3, 5, 7 }) Add($"conv_k{k}", ("kind", "conv"), ("kernel", k));
        foreach (var kind in new[] { "dwconv", "sepconv", "factorized", "maxpool", "avgpool", "mbconv" })
            foreach (var k in new[] { 3, 5, 7 }) Add($"{kind}_k{k}", ("kind", kind), ("kernel", k));
        foreach (var kind in new[] { "conv", "dwconv", "sepconv" })
            foreach (var d in new[] { 1, 2, 3, 4 }) Add($"{kind}_d{d}", ("kind", kind), ("kernel", 3), ("dilation", d));
        Add("sepconv_k5_d4", ("kind", "sepconv"), ("kernel", 5), ("dilation", 4));
        Add("conv_k7_d4", ("kind", "conv"), ("kernel", 7), ("dilation", 4));
        foreach (var r in new[] { 1, 2 }) Add($"sepconv_r{r}", ("kind", "sepconv"), ("kernel", 3), ("repeat", r));
        Add("sepconv_k5_d2_r2", ("kind", "sepconv"), ("kernel", 5), ("dilation", 2), ("repeat", 2), ("act", "silu"));
        foreach (var e in Enumerable.Range(1, 8)) Add($"mbconv_e{e}", ("kind", "mbconv"), ("kernel", 3), ("expand", e));
        foreach (var se in new[] { 0.0, 0.1, 0.25, 0.37, 0.5, 1.0 })
            Add("mbconv_se" + se.ToString("0.##", CultureInfo.InvariantCulture).Replace(".", "p"),
                ("kind", "mbconv"), ("kernel", 5), ("expand", 4), ("se", se));
        Add("mbconv_e1_se", ("kind", "mbconv"), ("kernel", 3), ("expand", 1), ("se", 0.25), ("act", "hardswish"));
        foreach (var kind in new[] { "conv", "dwconv", "sepconv", "factorized", "mbconv" })
            foreach (var act in Activations)
            {
                var fields = new List<(string, object)> { ("kind", kind), ("kernel", kind == "conv" ? 1 : 3), ("act", act) };
                if (kind == "mbconv") fields.Add(("se", 0.25)); // the squeeze's A' follows A (relu for none)
                if (kind == "sepconv") fields.Add(("repeat", 2)); // the second round's activation names
                Add($"{kind}_{act}", fields.ToArray());
            }
        return list;
    }

    private static List<object> Levels(Random random, int maxLevels, int maxNodes, double density, string[] levelZero, string[] firstChain)
    {
        var levelCount = random.Next(1, maxLevels + 1);
        var p = density > 0 ? density : 0.3 + 0.6 * random.NextDouble();
        var levels = new List<object>();
        var belowNames = new List<string>();
        for (var k = 0; k < levelCount; k++)
        {
            var nodes = levelCount == 1 ? random.Next(2, Math.Max(3, maxNodes * 2)) : random.Next(2, maxNodes + 1);
            var motifCount = k == levelCount - 1 ? 1 : random.Next(1, 4);
            var alphabet = k == 0 ? levelZero : belowNames.Concat(["identity", "none"]).ToArray();
            var motifs = new Dictionary<string, object>();
            var names = new List<string>();
            for (var m = 0; m < motifCount; m++)
            {
                var name = k == levelCount - 1 ? "cell" : $"m{k}_{m}";
                names.Add(name);
                var edges = new List<object[]>();
                for (var j = 1; j < nodes; j++)
                for (var i = 0; i < j; i++)
                {
                    // Always offer the chain edge so that most cells are live; other pairs by density.
                    if (i != j - 1 && random.NextDouble() > p) continue;
                    var op = k == 0 && m == 0 && i == j - 1 && j - 1 < firstChain.Length
                        ? firstChain[j - 1]
                        : alphabet[random.Next(alphabet.Length)];
                    edges.Add([i, j, op]);
                }
                Shuffle(edges, random);
                motifs[name] = new { edges };
            }
            levels.Add(new { nodes, motifs });
            belowNames = names;
        }
        return levels;
    }

    private static void Shuffle<T>(List<T> items, Random random)
    {
        for (var i = items.Count - 1; i > 0; i--)
        {
            var j = random.Next(i + 1);
            (items[i], items[j]) = (items[j], items[i]);
        }
    }
}
