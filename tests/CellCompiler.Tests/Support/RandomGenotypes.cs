using System.Text.Json;
using CellCompiler.Input;

namespace CellCompiler.Tests.Support;

/// <summary>
/// A test-only generator of random genotypes: random depth, node counts, motif counts and edge
/// sparsity, with `none` edges, unused motifs and dead code arising naturally. Deterministic per seed.
/// </summary>
public static class RandomGenotypes
{
    private static readonly string[] LevelZeroOps =
        ["identity", "conv1x1", "conv3x3", "dwconv3x3", "sepconv3x3", "maxpool3x3", "avgpool3x3", "none"];

    /// <summary>A genotype document (as JSON) with at most <paramref name="maxLevels"/> levels.</summary>
    public static string Json(int seed, int maxLevels = 3, int maxNodes = 6, double density = -1)
    {
        var random = new Random(seed);
        var levelCount = random.Next(1, maxLevels + 1);
        var p = density > 0 ? density : 0.3 + 0.6 * random.NextDouble();
        var levels = new List<object>();
        var belowNames = new List<string>();
        for (var k = 0; k < levelCount; k++)
        {
            var nodes = levelCount == 1 ? random.Next(2, Math.Max(3, maxNodes * 2)) : random.Next(2, maxNodes + 1);
            var motifCount = k == levelCount - 1 ? 1 : random.Next(1, 4);
            var alphabet = k == 0 ? LevelZeroOps : belowNames.Concat(["identity", "none"]).ToArray();
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
                    edges.Add([i, j, alphabet[random.Next(alphabet.Length)]]);
                }
                Shuffle(edges, random);
                motifs[name] = new { edges };
            }
            levels.Add(new { nodes, motifs });
            belowNames = names;
        }
        return JsonSerializer.Serialize(new { format = "genotype/1", name = $"random-{seed}", levels });
    }

    public static Genotype Parse(int seed, int maxLevels = 3, int maxNodes = 6) =>
        GenotypeReader.Parse(Json(seed, maxLevels, maxNodes), $"random-{seed}", $"random-{seed}");

    private static void Shuffle<T>(List<T> items, Random random)
    {
        for (var i = items.Count - 1; i > 0; i--)
        {
            var j = random.Next(i + 1);
            (items[i], items[j]) = (items[j], items[i]);
        }
    }
}
