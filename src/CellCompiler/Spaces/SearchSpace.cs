using System.Numerics;
using CellCompiler.Input;
using CellCompiler.Sampling;
using CellCompiler.Vocabulary;

namespace CellCompiler.Spaces;

/// <summary>
/// One level of a space: every motif of it has <paramref name="Nodes"/> nodes and labels each of its
/// node pairs with one op of <paramref name="Ops"/> (as written in the file; <see cref="SearchSpace.AllMotifsBelow"/> kept as the token).
/// </summary>
public sealed record SpaceLevel(int Nodes, int Motifs, IReadOnlyList<string> Ops)
{
    /// <summary>Node pairs (i, j), i &lt; j, of one motif: n(n-1)/2.</summary>
    public int Pairs => Nodes * (Nodes - 1) / 2;
}

/// <summary>
/// A hierarchical search space described by shape (a space/1 file): per level a node count, a motif
/// count and an alphabet. Its genotypes are every labelling of every pair of every motif by an op of
/// its level's alphabet; a `none` label leaves the pair out. Motifs are named as <c>cellc sample</c>
/// names them (<see cref="GenotypeSampler.MotifName"/>): <c>m{level}_{index}</c>, the cell <c>cell</c>.
/// </summary>
public sealed class SearchSpace
{
    public const string FormatTag = "space/1";

    /// <summary>At levels above 0, stands for every motif of the level below.</summary>
    public const string AllMotifsBelow = "*";

    private readonly string[][] _alphabets;

    public SearchSpace(string name, IReadOnlyList<SpaceLevel> levels, PrimitiveTable primitives)
    {
        if (levels.Count == 0) throw new ArgumentException("a space needs at least one level", nameof(levels));
        if (levels[^1].Motifs != 1) throw new ArgumentException("the last level holds exactly one motif, the cell", nameof(levels));
        Name = name;
        Levels = levels;
        Primitives = primitives;
        _alphabets = new string[levels.Count][];
        for (var k = 0; k < levels.Count; k++)
        {
            var resolved = new List<string>();
            foreach (var op in levels[k].Ops)
            {
                if (op == AllMotifsBelow)
                {
                    if (k == 0) throw new ArgumentException("level 0 has no level below for '*'", nameof(levels));
                    for (var i = 0; i < levels[k - 1].Motifs; i++) resolved.Add(MotifName(k - 1, i));
                }
                else resolved.Add(op);
            }
            _alphabets[k] = [.. resolved];
        }
        Genotypes = CountGenotypes();
    }

    public string Name { get; }
    public IReadOnlyList<SpaceLevel> Levels { get; }

    /// <summary>The built-ins and the space's declared primitives; every genotype of the space carries the declarations.</summary>
    public PrimitiveTable Primitives { get; }

    /// <summary>The declarations a genotype of this space carries (null: none).</summary>
    public PrimitiveTable? Declarations => Primitives.Declared.Count == 0 ? null : Primitives;

    /// <summary>The exact number of genotypes: the product over levels of (|alphabet|^pairs)^motifs.</summary>
    public BigInteger Genotypes { get; }

    /// <summary>log10 of <see cref="Genotypes"/> (a double is enough to say how big; the exact count is <see cref="Genotypes"/>).</summary>
    public double Log10Genotypes => BigInteger.Log10(Genotypes);

    /// <summary>Declared primitives that level 0's alphabet does not list (worth a warning: no genotype uses them).</summary>
    public IReadOnlyList<string> UnusedDeclarations =>
        Primitives.Declared.Select(d => d.Name).Where(name => !Levels[0].Ops.Contains(name)).ToList();

    /// <summary>Level k's ops with `*` replaced by the motif names of level k-1, in order.</summary>
    public IReadOnlyList<string> Alphabet(int level) => _alphabets[level];

    public string MotifName(int level, int index) => GenotypeSampler.MotifName(level, index, Levels.Count);

    /// <summary>Labellings of one motif of level k: |alphabet|^(n(n-1)/2).</summary>
    public BigInteger LabellingsPerMotif(int level) => BigInteger.Pow(_alphabets[level].Length, Levels[level].Pairs);

    private BigInteger CountGenotypes()
    {
        var total = BigInteger.One;
        for (var k = 0; k < Levels.Count; k++)
            total *= BigInteger.Pow(LabellingsPerMotif(k), Levels[k].Motifs);
        return total;
    }

    /// <summary>
    /// The most primitive ops (identity included, as <see cref="ExpansionSize"/> counts them) that a
    /// genotype of the space can expand to: every pair of every motif labelled with its level's largest op.
    /// Saturates just above the genotype limit.
    /// </summary>
    public long WorstCaseExpandedOps()
    {
        const long cap = Limits.MaxExpandedPrimitiveOps + 1;
        long below = 0;
        for (var k = 0; k < Levels.Count; k++)
        {
            long largest = 0;
            foreach (var op in Levels[k].Ops)
            {
                var size = op switch
                {
                    Input.Primitives.None => 0,
                    AllMotifsBelow => below,
                    _ => 1,
                };
                largest = Math.Max(largest, size);
            }
            below = Math.Min(cap, largest * Levels[k].Pairs);
        }
        return below;
    }
}
