using CellCompiler.Spaces;

namespace CellCompiler.Tests;

/// <summary>Small space/1 documents for the space tests (tidepool scenario), each small enough to enumerate.</summary>
internal static class SpaceFiles
{
    /// <summary>A 4-node cell over five ops with none and identity: 5^6 = 15,625 genotypes.</summary>
    public const string Flat4Five = """
        {"format":"space/1","name":"tidepool-flat4-five",
         "levels":[{"nodes":4,"ops":["none","identity","conv1x1","conv3x3","avgpool3x3"]}]}
        """;

    /// <summary>Every built-in at every pair of a 3-node cell: 8^3 = 512.</summary>
    public const string Flat3All = """
        {"format":"space/1","levels":[{"nodes":3,"ops":["none","identity","conv1x1","conv3x3","dwconv3x3","sepconv3x3","maxpool3x3","avgpool3x3"]}]}
        """;

    /// <summary>3^6 = 729, with many dead cells and many spellings of one network.</summary>
    public const string Flat4Three = """
        {"format":"space/1","levels":[{"nodes":4,"ops":["none","identity","conv3x3"]}]}
        """;

    /// <summary>4^6 = 4,096.</summary>
    public const string Flat4Four = """
        {"format":"space/1","levels":[{"nodes":4,"ops":["none","identity","sepconv3x3","maxpool3x3"]}]}
        """;

    /// <summary>Two levels: one 3-node motif over 3 ops (27), a 3-node cell over the motif, identity and none (27): 729.</summary>
    public const string TwoLevels = """
        {"format":"space/1","levels":[{"nodes":3,"ops":["none","conv3x3","maxpool3x3"]},{"nodes":3,"ops":["*","identity","none"]}]}
        """;

    /// <summary>Two levels with two motifs: (3^1)^2 = 9 at level 0, 4^6 = 4,096 cells: 36,864.</summary>
    public const string TwoMotifs = """
        {"format":"space/1","levels":[{"nodes":2,"motifs":2,"ops":["identity","conv3x3","avgpool3x3"]},{"nodes":4,"ops":["*","identity","none"]}]}
        """;

    /// <summary>Declared primitives (contract 3.1) whose layers coincide with other spellings: 5^3 = 125.</summary>
    public const string Declared = """
        {"format":"space/1","name":"tidepool-declared",
         "primitives":{"s1":{"kind":"sepconv","kernel":3},"s2":{"kind":"sepconv","kernel":3,"repeat":2},"mb":{"kind":"mbconv","kernel":3,"expand":1}},
         "levels":[{"nodes":3,"ops":["none","identity","s1","s2","mb"]}]}
        """;

    /// <summary>A space of this class by its field name (readable names in theory data).</summary>
    public static string ByName(string name) => name switch
    {
        nameof(Flat4Five) => Flat4Five,
        nameof(Flat3All) => Flat3All,
        nameof(Flat4Three) => Flat4Three,
        nameof(Flat4Four) => Flat4Four,
        nameof(TwoLevels) => TwoLevels,
        nameof(TwoMotifs) => TwoMotifs,
        nameof(Declared) => Declared,
        _ => throw new ArgumentException($"no test space named {name}", nameof(name)),
    };

    public static SearchSpace Parse(string json, string name = "space") => SpaceReader.Parse(json, name + ".json", name);
}
