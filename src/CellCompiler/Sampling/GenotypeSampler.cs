using CellCompiler.Onnx;
using System.Globalization;
using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.Sampling;

/// <summary>Which input of a sample specification is wrong.</summary>
public enum SampleParameter { Nodes, Motifs, NoneWeight, Ops }

/// <summary>Why a sample specification cannot be sampled.</summary>
public sealed record SampleProblem(SampleParameter Parameter, string Problem);

/// <summary>
/// Uniformly random genotypes of a fixed shape (node count and motif count per level), for test
/// populations and benchmarks (`cellc sample`, issue 4). Every pair (i, j), i &lt; j, of every motif
/// draws its op independently from its level's alphabet: level 0 the primitives, level k &gt;= 1
/// the motif names of level k-1 plus `identity`; `none` is drawn with weight <c>NoneWeight</c>
/// against weight 1 for every other op. `none` edges are left out (an unlisted pair is none).
/// Motifs are named <c>m{k}_{index}</c> below the top level; the top level's single motif is <c>cell</c>.
/// </summary>
/// <remarks>
/// Deterministic: genotype n (counted from 1) depends only on the shape, the none weight, the seed
/// and n, through a generator of our own (xoshiro256** seeded by SplitMix64), never on the .NET
/// version's <see cref="Random"/>. Each genotype has its own stream, so genotype n is the same
/// whatever the count and can be drawn on its own.
/// </remarks>
public sealed class GenotypeSampler
{
    /// <summary>The longest id <see cref="Check"/> allows for when bounding a line's size.</summary>
    public const int MaxIdLength = 64;

    private readonly int[] _nodes;
    private readonly string[][] _names;
    private readonly string[][] _ops;
    // Integer weights (the default 1 and 0 among them) are drawn exactly; other weights through a double.
    private readonly long _integerNoneWeight;
    private readonly PrimitiveTable _primitives;
    private readonly string[] _levelZero;
    private readonly bool _integerWeight;

    /// <param name="primitives">The vocabulary: built-ins and declared primitives (default: the built-ins).</param>
    /// <param name="ops">The level-0 alphabet (default: <see cref="DefaultOps"/>); `identity` may be among them.</param>
    public GenotypeSampler(IReadOnlyList<int> nodes, IReadOnlyList<int> motifs, double noneWeight = 1, long seed = 0,
        PrimitiveTable? primitives = null, IReadOnlyList<string>? ops = null)
    {
        _primitives = primitives ?? PrimitiveTable.BuiltinsOnly;
        _levelZero = ops?.ToArray() ?? DefaultOps(_primitives).ToArray();
        var problem = Check(nodes, motifs, noneWeight, _primitives, _levelZero);
        if (problem is not null)
            throw new ArgumentException(problem.Problem, problem.Parameter switch
            {
                SampleParameter.Nodes => nameof(nodes),
                SampleParameter.Motifs => nameof(motifs),
                SampleParameter.Ops => nameof(ops),
                _ => nameof(noneWeight),
            });
        _nodes = [.. nodes];
        NoneWeight = noneWeight;
        Seed = seed;
        _integerWeight = noneWeight == Math.Floor(noneWeight) && noneWeight <= 1 << 20;
        _integerNoneWeight = _integerWeight ? (long)noneWeight : 0;

        _names = new string[nodes.Count][];
        _ops = new string[nodes.Count][];
        for (var k = 0; k < nodes.Count; k++)
        {
            _names[k] = Enumerable.Range(0, motifs[k]).Select(i => MotifName(k, i, nodes.Count)).ToArray();
            _ops[k] = k == 0 ? _levelZero : [.. _names[k - 1], Primitives.Identity];
        }
    }

    /// <summary>The default level-0 alphabet: identity, the built-ins, then the declared primitives.</summary>
    public static IReadOnlyList<string> DefaultOps(PrimitiveTable primitives) => [Primitives.Identity, .. primitives.Names];

    public IReadOnlyList<int> Nodes => _nodes;
    public IReadOnlyList<int> Motifs => _names.Select(n => n.Length).ToArray();
    public double NoneWeight { get; }
    public long Seed { get; }

    /// <summary>The ops level k draws from, `none` excluded (it is drawn with <see cref="NoneWeight"/>).</summary>
    public IReadOnlyList<string> OpsAt(int level) => _ops[level];

    /// <summary><c>m{k}_{index}</c> below the top level, <c>cell</c> for the top level's motif.</summary>
    public static string MotifName(int level, int index, int levelCount) =>
        level == levelCount - 1 ? "cell" : string.Create(CultureInfo.InvariantCulture, $"m{level}_{index}");

    /// <summary><c>s{seed}-{n}</c>, n zero-padded to the width of the count.</summary>
    public static string Id(long seed, long n, long count)
    {
        var width = count.ToString(CultureInfo.InvariantCulture).Length;
        return string.Create(CultureInfo.InvariantCulture, $"s{seed}-{n.ToString(CultureInfo.InvariantCulture).PadLeft(width, '0')}");
    }

    /// <summary>Genotypes 1 to <paramref name="count"/>, one at a time, with ids from <see cref="Id"/>.</summary>
    public IEnumerable<Genotype> Sample(long count)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        for (long n = 1; n <= count; n++)
            yield return Sample(n, Id(Seed, n, count));
    }

    /// <summary>Genotype number <paramref name="n"/> (from 1) of this seed, named and identified by <paramref name="id"/>.</summary>
    public Genotype Sample(long n, string id)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(n, 1);
        var random = ForGenotype(Seed, n);
        var levels = new Level[_nodes.Length];
        for (var k = 0; k < _nodes.Length; k++)
        {
            var nodes = _nodes[k];
            var ops = _ops[k];
            var motifs = new Motif[_names[k].Length];
            for (var m = 0; m < motifs.Length; m++)
            {
                var edges = new List<Edge>(nodes * (nodes - 1) / 2);
                for (var i = 0; i < nodes - 1; i++)
                for (var j = i + 1; j < nodes; j++)
                {
                    var op = Draw(ref random, ops);
                    if (op is not null) edges.Add(new Edge(i, j, op, edges.Count));
                }
                motifs[m] = new Motif(_names[k][m], edges);
            }
            levels[k] = new Level(nodes, motifs);
        }
        // A sampled genotype carries the declarations it uses, and only those.
        var declared = _primitives.Declared.Count == 0 ? null
            : _primitives.Restrict(levels[0].Motifs.SelectMany(m => m.Edges).Select(e => e.Op));
        return new Genotype(id, levels, id, declared is { Declared.Count: > 0 } ? declared : null);
    }

    /// <summary>One op of the alphabet, or null for `none`.</summary>
    private string? Draw(ref SeededRandom random, string[] ops)
    {
        if (_integerWeight)
        {
            // Exact: one of (ops + W) equally likely outcomes, the first W of which are none.
            var r = random.Below((ulong)(ops.Length + _integerNoneWeight));
            return r < (ulong)_integerNoneWeight ? null : ops[(int)(r - (ulong)_integerNoneWeight)];
        }
        var u = random.NextDouble() * (ops.Length + NoneWeight);
        if (u < NoneWeight) return null;
        return ops[Math.Min((int)(u - NoneWeight), ops.Length - 1)];
    }

    /// <summary>
    /// Null when the specification can be sampled, else what is wrong. Beyond the ranges of each
    /// value, every genotype it can produce must pass the reader's limits (contract section 1): the
    /// largest possible expanded cell and the longest possible line (with an id of up to
    /// <see cref="MaxIdLength"/> characters) are bounded up front, so no sampled line is ever invalid.
    /// </summary>
    public static SampleProblem? Check(IReadOnlyList<int> nodes, IReadOnlyList<int> motifs, double noneWeight,
        PrimitiveTable? primitives = null, IReadOnlyList<string>? ops = null)
    {
        primitives ??= PrimitiveTable.BuiltinsOnly;
        var alphabet = ops ?? DefaultOps(primitives);
        if (nodes.Count == 0)
            return new(SampleParameter.Nodes, "give at least one level");
        if (nodes.Count > Limits.MaxLevels)
            return new(SampleParameter.Nodes, $"{nodes.Count} levels; the limit is {Limits.MaxLevels}");
        foreach (var n in nodes)
            if (n is < Limits.MinNodes or > Limits.MaxNodes)
                return new(SampleParameter.Nodes, $"each level has {Limits.MinNodes} to {Limits.MaxNodes} nodes, found {n}");
        if (motifs.Count != nodes.Count)
            return new(SampleParameter.Motifs,
                $"{Wording.Counted(motifs.Count, "motif count")} for {Wording.Counted(nodes.Count, "level")}; give one motif count per level");
        foreach (var m in motifs)
            if (m is < 1 or > Limits.MaxMotifsPerLevel)
                return new(SampleParameter.Motifs, $"each level has 1 to {Limits.MaxMotifsPerLevel} motifs, found {m}");
        if (motifs[^1] != 1)
            return new(SampleParameter.Motifs, $"the last level defines the cell and must hold exactly 1 motif, found {motifs[^1]}");
        if (!double.IsFinite(noneWeight) || noneWeight < 0)
            return new(SampleParameter.NoneWeight, $"must be a finite number >= 0, found {noneWeight.ToString(CultureInfo.InvariantCulture)}");

        if (alphabet.Count == 0)
            return new(SampleParameter.Ops, "the level-0 alphabet is empty; give at least one op");
        foreach (var op in alphabet)
        {
            if (op == Primitives.None)
                return new(SampleParameter.Ops, "none is not listed among the ops: --none-weight sets how often a pair is left out");
            if (op != Primitives.Identity && !primitives.IsPrimitive(op))
                return new(SampleParameter.Ops,
                    $"unknown op '{op}'; available: {string.Join(", ", [Primitives.Identity, .. primitives.Names])}");
        }
        var duplicated = alphabet.GroupBy(op => op, StringComparer.Ordinal).FirstOrDefault(g => g.Count() > 1);
        if (duplicated is not null)
            return new(SampleParameter.Ops, $"'{duplicated.Key}' is listed twice; every op is drawn with the same weight once");

        var expanded = WorstCaseExpandedOps(nodes);
        if (expanded > (UInt128)Limits.MaxExpandedPrimitiveOps)
            return new(SampleParameter.Nodes,
                $"a sampled cell could expand to {expanded:N0} primitive ops (every pair of every level an op); " +
                $"the limit is {Limits.MaxExpandedPrimitiveOps:N0}: use fewer nodes or levels");
        var bytes = WorstCaseJsonBytes(nodes, motifs, MaxIdLength, alphabet, primitives);
        if (bytes > Limits.MaxJsonBytes)
            return new(SampleParameter.Motifs,
                $"a sampled genotype could take {bytes:N0} bytes of JSON; the limit is {Limits.MaxJsonBytes:N0} bytes (1 MiB): " +
                "use fewer motifs or nodes");
        return null;
    }

    /// <summary>
    /// The largest expanded cell (primitive ops, as <see cref="ExpansionSize"/> counts them): every
    /// pair of every level listed, each with an op at least as large as any other, i.e. the product
    /// of the pair counts (at most 2016^8, which fits in 128 bits).
    /// </summary>
    public static UInt128 WorstCaseExpandedOps(IReadOnlyList<int> nodes)
    {
        UInt128 total = 1;
        foreach (var n in nodes)
            total *= (ulong)Pairs(n);
        return total;
    }

    /// <summary>
    /// The longest line <see cref="GenotypeJson.Write"/> can give for this shape with an id of
    /// <paramref name="idLength"/> ASCII characters: every pair listed with the longest op name of
    /// its level. Counted from the compact format, without building anything.
    /// </summary>
    public static long WorstCaseJsonBytes(IReadOnlyList<int> nodes, IReadOnlyList<int> motifs, int idLength,
        IReadOnlyList<string>? ops = null, PrimitiveTable? primitives = null)
    {
        primitives ??= PrimitiveTable.BuiltinsOnly;
        var levelZero = ops ?? DefaultOps(primitives);
        // {"id":"<id>","format":"genotype/1","levels":[ ... ]}
        long total = "{\"id\":\"".Length + idLength + "\",".Length + "\"format\":\"genotype/1\",".Length
            + "\"levels\":[".Length + "]}".Length + (nodes.Count - 1);
        // Every declaration, as the writer spells it: a sample carries at most these.
        if (primitives.Declared.Count > 0)
            total += ",\"primitives\":".Length + DeclarationsBytes(primitives);
        var levelCount = nodes.Count;
        for (var k = 0; k < levelCount; k++)
        {
            var n = nodes[k];
            var longestOp = k == 0
                ? levelZero.Max(op => op.Length)
                : Math.Max(Primitives.Identity.Length, MotifName(k - 1, motifs[k - 1] - 1, levelCount).Length);
            // Each edge: [i,j,"op"]
            long edges = 0;
            for (var i = 0; i < n - 1; i++)
            for (var j = i + 1; j < n; j++)
                edges += 6 + Digits(i) + Digits(j) + longestOp;
            edges += Pairs(n) - 1; // commas between edges
            // {"nodes":N,"motifs":{ ... }}
            total += "{\"nodes\":".Length + Digits(n) + ",\"motifs\":{".Length + "}}".Length + (motifs[k] - 1);
            for (var m = 0; m < motifs[k]; m++)
                // "name":{"edges":[ ... ]}
                total += 1 + MotifName(k, m, levelCount).Length + "\":{\"edges\":[".Length + edges + "]}".Length;
        }
        return total;
    }

    private static long DeclarationsBytes(PrimitiveTable primitives)
    {
        using var stream = new MemoryStream();
        using (var writer = JsonOutput.Writer(stream))
        {
            writer.WriteStartObject();
            foreach (var (name, definition) in primitives.Declared)
                GenotypeJson.WriteDeclaration(writer, name, definition);
            writer.WriteEndObject();
        }
        return stream.Length;
    }

    private static long Pairs(int n) => (long)n * (n - 1) / 2;

    private static int Digits(int value) => value < 10 ? 1 : value < 100 ? 2 : 3;

    /// <summary>An independent stream for genotype n of a seed: n is mixed in through an odd multiplier and a SplitMix pass.</summary>
    private static SeededRandom ForGenotype(long seed, long n)
    {
        var state = (ulong)seed;
        var key = SeededRandom.SplitMix(ref state);
        state = key ^ ((ulong)n * 0xD1B54A32D192ED03UL);
        return new SeededRandom(SeededRandom.SplitMix(ref state));
    }
}
