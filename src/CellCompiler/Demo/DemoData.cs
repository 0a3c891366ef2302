using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Demo;

/// <summary>
/// The demo's invented scenario: a small team searches cells for a classifier of tide-pool
/// photographs (ten kinds of creature, 32x32 crops). Two cells came out of their last search.
/// </summary>
public static class DemoData
{
    /// <summary>
    /// The team's own primitives (contract 3.1), declared by the cells and offered to the sampler:
    /// a wide separable convolution, an inverted bottleneck with squeeze-excitation, a factorized strip.
    /// </summary>
    public const string PrimitivesJson = """
        {"wide5":{"kind":"sepconv","kernel":5},
         "bneck3":{"kind":"mbconv","kernel":3,"expand":4,"se":0.25,"act":"silu"},
         "strip5":{"kind":"factorized","kernel":5}}
        """;

    public static PrimitiveTable Primitives { get; } =
        PrimitiveDeclarations.Parse(System.Text.Encoding.UTF8.GetBytes(PrimitivesJson), "the demo's primitives");

    /// <summary>The level-0 alphabet the population is drawn from: identity, the built-ins and the team's primitives.</summary>
    public static IReadOnlyList<string> PopulationOps { get; } = Sampling.GenotypeSampler.DefaultOps(Primitives);

    /// <summary>A 3-level cell: three level-0 motifs composed into two level-1 motifs, composed into the cell.</summary>
    public const string ReefCell = """
        {"format":"genotype/1","name":"tidepool-reef",
         "primitives":{"wide5":{"kind":"sepconv","kernel":5},"bneck3":{"kind":"mbconv","kernel":3,"expand":4,"se":0.25,"act":"silu"}},
         "levels":[
          {"nodes":4,"motifs":{
            "anemone":{"edges":[[0,1,"conv1x1"],[0,2,"bneck3"],[1,3,"identity"],[2,3,"maxpool3x3"]]},
            "barnacle":{"edges":[[0,1,"wide5"],[1,2,"avgpool3x3"],[0,3,"conv1x1"],[2,3,"identity"]]},
            "chiton":{"edges":[[0,1,"conv3x3"],[1,3,"identity"],[0,2,"avgpool3x3"],[2,3,"conv1x1"]]}}},
          {"nodes":4,"motifs":{
            "reef":{"edges":[[0,1,"anemone"],[1,2,"barnacle"],[0,2,"identity"],[2,3,"chiton"]]},
            "shelf":{"edges":[[0,1,"barnacle"],[0,2,"chiton"],[1,3,"anemone"],[2,3,"identity"]]}}},
          {"nodes":5,"motifs":{
            "cell":{"edges":[[0,1,"reef"],[0,2,"shelf"],[1,3,"shelf"],[2,3,"identity"],[3,4,"reef"],[0,4,"none"]]}}}]}
        """;

    /// <summary>A flat 11-node cell of primitives.</summary>
    public const string KelpCell = """
        {"format":"genotype/1","name":"tidepool-kelp","levels":[
          {"nodes":11,"motifs":{"cell":{"edges":[
            [0,1,"conv1x1"],[0,2,"sepconv3x3"],[1,3,"dwconv3x3"],[2,3,"identity"],[1,4,"maxpool3x3"],
            [3,5,"conv3x3"],[4,5,"avgpool3x3"],[0,6,"identity"],[5,6,"sepconv3x3"],[6,7,"conv1x1"],
            [2,7,"maxpool3x3"],[7,8,"dwconv3x3"],[8,9,"identity"],[6,9,"avgpool3x3"],[9,10,"conv1x1"],[4,10,"identity"]]}}}]}
        """;

    /// <summary>
    /// The generated population: 200 two-level genotypes, as
    /// `cellc sample --levels 4,5 --motifs 6,1 --seed 2026 --primitives primitives.json` with the primitives above.
    /// </summary>
    public const int PopulationSize = 200;
    public const long PopulationSeed = 2026;
    public static readonly int[] PopulationNodes = [4, 5];
    public static readonly int[] PopulationMotifs = [6, 1];

    /// <summary>Budgets of the scenario: the team's phone app allows this much at proxy size.</summary>
    public const long MaxParams = 500_000;
    public const long MaxMacs = 75_000_000;
}
