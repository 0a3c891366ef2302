using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Vocabulary;

namespace CellCompiler.Prediction;

/// <summary>
/// How often one copy of a cell applies each primitive definition and merges each fan-in, counted
/// from the genotype without lowering it: the motif hierarchy walked as the lowerer walks it
/// (<see cref="CellContext"/>: live edges by target then source, the same dead-code analysis).
/// Channels and sizes do not enter: the census holds for every stage and every skeleton.
/// <para>
/// As run (<see cref="Of"/> with <c>asRun</c>, the default), the census counts what ONNX Runtime
/// actually executes: its common-subexpression elimination (on at every optimization level) merges
/// nodes of one op type with equal attributes and the very same inputs. Layers with weights never
/// qualify (each has its own initializers), but a weightless primitive (max or average pooling)
/// applied twice to one tensor runs once, and so does a sum merge of the same tensors in the same
/// order; both happen often in hierarchical cells, where copies of a motif read one input. Seen in
/// the runtime's profiler (a sampled proxy cell emitting 54 pooling nodes ran 24) and checked by
/// PredictionArithmeticTests against it. A concat merge is always counted: its Concat could be
/// shared, but the conv1x1 after it has its own weights and dominates its time.
/// </para>
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

    /// <param name="asRun">count what ONNX Runtime runs (shared weightless nodes once); false: what the compiled model holds</param>
    public static CellCensus Of(Genotype genotype, Liveness liveness, MergeMode merge, bool asRun = true)
    {
        var primitives = new Dictionary<PrimitiveDefinition, long>();
        var merges = new Dictionary<int, long>();
        // Value numbers stand for tensors: 0 is the cell's input, every node that computes something new gets the next number.
        var next = 1;
        var weightless = new Dictionary<(PrimitiveDefinition, int), int>();
        var sums = new Dictionary<string, int>(StringComparer.Ordinal);

        int Primitive(PrimitiveDefinition definition, int input)
        {
            if (asRun && !definition.Trainable && weightless.TryGetValue((definition, input), out var same)) return same;
            primitives[definition] = checked(primitives.GetValueOrDefault(definition) + 1);
            var made = next++;
            if (!definition.Trainable) weightless[(definition, input)] = made;
            return made;
        }

        int Merge(List<int> inputs)
        {
            var key = string.Join(',', inputs);
            if (asRun && merge == MergeMode.Sum && sums.TryGetValue(key, out var same)) return same;
            merges[inputs.Count] = checked(merges.GetValueOrDefault(inputs.Count) + 1);
            var made = next++;
            if (merge == MergeMode.Sum) sums[key] = made;
            return made;
        }

        int Motif(int level, string name, int input)
        {
            var live = liveness.Of(level, name).LiveEdges; // sorted by target, then source, as the lowerer reads them
            var values = new int[genotype.Levels[level].Nodes];
            values[0] = input;
            var inbound = new List<int>();
            var e = 0;
            for (var j = 1; j < values.Length; j++)
            {
                inbound.Clear();
                while (e < live.Count && live[e].To == j)
                {
                    var edge = live[e++];
                    var from = values[edge.From];
                    inbound.Add(edge.Op == Input.Primitives.Identity ? from
                        : level > 0 ? Motif(level - 1, edge.Op, from)
                        : Primitive(genotype.Primitives.Get(edge.Op), from));
                }
                values[j] = inbound.Count switch
                {
                    0 => -1,
                    1 => inbound[0],
                    _ => Merge([.. inbound]),
                };
            }
            return values[^1];
        }

        Motif(genotype.TopLevel, genotype.Cell.Name, 0);
        return new CellCensus(primitives, merges);
    }
}
