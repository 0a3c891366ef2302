using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>
/// How often one copy of a cell applies each primitive definition and merges each fan-in, counted
/// from the genotype without lowering it: the live edges of each motif (the same dead-code analysis
/// the lowerer uses), with each motif's counts worked out once and multiplied by its uses. Channels
/// and sizes do not enter: the census holds for every stage and every skeleton.
/// </summary>
public sealed class CellCensus
{
    private CellCensus(IReadOnlyDictionary<PrimitiveDefinition, long> primitives, IReadOnlyDictionary<int, long> merges)
    {
        Primitives = primitives;
        Merges = merges;
    }

    /// <summary>Applications per primitive definition (two names for one definition count together).</summary>
    public IReadOnlyDictionary<PrimitiveDefinition, long> Primitives { get; }

    /// <summary>Merges per fan-in (live inputs of a node, 2 or more).</summary>
    public IReadOnlyDictionary<int, long> Merges { get; }

    public static CellCensus Of(Genotype genotype, Liveness liveness)
    {
        var memo = new Dictionary<(int Level, string Motif), Counts>();
        Counts Count(int level, string motif)
        {
            if (memo.TryGetValue((level, motif), out var known)) return known;
            var counts = new Counts();
            var info = liveness.Of(level, motif);
            var fanIn = new int[genotype.Levels[level].Nodes];
            foreach (var edge in info.LiveEdges)
            {
                fanIn[edge.To]++;
                if (edge.Op == Input.Primitives.Identity) continue;
                if (level == 0) counts.AddPrimitive(genotype.Primitives.Get(edge.Op), 1);
                else counts.Add(Count(level - 1, edge.Op));
            }
            // As the lowerer does: a node with two or more live inputs merges them.
            foreach (var k in fanIn)
                if (k >= 2) counts.AddMerge(k, 1);
            memo[(level, motif)] = counts;
            return counts;
        }
        var cell = Count(genotype.TopLevel, genotype.Cell.Name);
        return new CellCensus(cell.Primitives, cell.Merges);
    }

    private sealed class Counts
    {
        public Dictionary<PrimitiveDefinition, long> Primitives { get; } = [];
        public Dictionary<int, long> Merges { get; } = [];

        public void AddPrimitive(PrimitiveDefinition definition, long n) => Primitives[definition] = checked(Primitives.GetValueOrDefault(definition) + n);

        public void AddMerge(int fanIn, long n) => Merges[fanIn] = checked(Merges.GetValueOrDefault(fanIn) + n);

        public void Add(Counts other)
        {
            foreach (var (definition, n) in other.Primitives) AddPrimitive(definition, n);
            foreach (var (fanIn, n) in other.Merges) AddMerge(fanIn, n);
        }
    }
}
