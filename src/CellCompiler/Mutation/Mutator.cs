using System.Globalization;
using System.Text.Json;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Onnx;

namespace CellCompiler.Mutation;

/// <summary>
/// The standard hierarchical point mutation (issue 13): pick a level uniformly among the levels with
/// a motif that the cell uses, one of those motifs uniformly, one of its n(n-1)/2 node pairs
/// uniformly, and a new op for that pair uniformly from the level's alphabet other than the current
/// op. The level-0 alphabet is identity, none, the built-ins and the parent's declared primitives
/// (or <see cref="MutationOptions.LevelZeroOps"/>); above level 0 it is the motifs of the level
/// below, identity and none. A motif is used when the cell, or a motif the cell uses, has an edge
/// naming it (dead or alive). Every mutant is written and read back through the genotype reader, so
/// it is a valid genotype/1 document; a draw that would break a genotype limit is drawn again.
/// Deterministic: mutant n of a parent depends only on the seed, the parent's id and n.
/// </summary>
public sealed class Mutator(MutationOptions options)
{
    public MutationOptions Options => options;

    /// <summary>The mutant's id: the parent's id, "-m" and n, zero-padded to the width of the count.</summary>
    public string MutantId(string parentId, int n) =>
        string.Create(CultureInfo.InvariantCulture, $"{parentId}-m{n.ToString(CultureInfo.InvariantCulture).PadLeft(options.Count.ToString(CultureInfo.InvariantCulture).Length, '0')}");

    /// <summary>The ops level <paramref name="level"/> of <paramref name="genotype"/> mutates over.</summary>
    /// <exception cref="InputException">--ops names a primitive this genotype does not declare.</exception>
    public IReadOnlyList<string> Alphabet(Genotype genotype, int level, string origin)
    {
        if (level > 0)
            return [.. genotype.Levels[level - 1].Motifs.Select(m => m.Name), Primitives.Identity, Primitives.None];
        if (options.LevelZeroOps is not { } ops)
            return [Primitives.Identity, Primitives.None, .. genotype.Primitives.Names];
        foreach (var op in ops)
            if (!Primitives.IsStructural(op) && !genotype.Primitives.IsPrimitive(op))
                throw new InputException(origin, "--ops",
                    $"'{op}' is neither identity, none, a built-in primitive nor a primitive this genotype declares " +
                    $"(it declares {(genotype.Primitives.Declared.Count == 0 ? "none" : string.Join(", ", genotype.Primitives.Declared.Select(d => d.Name)))})");
        return ops;
    }

    /// <summary>Mutant <paramref name="n"/> (from 1) of <paramref name="parent"/>.</summary>
    /// <param name="origin">Where the parent comes from, for errors (file and line).</param>
    public MutantResult Mutate(Genotype parent, string parentId, int n, string origin)
    {
        var id = MutantId(parentId, n);
        var alphabets = Enumerable.Range(0, parent.Levels.Count).Select(k => Alphabet(parent, k, origin)).ToArray();
        if (id.Length > 256)
            return Failed(parentId, id, new RetryCounts(0, 0, 0), $"the mutant's id '{id[..40]}...' would be longer than the 256 characters an id may have");

        var used = UsedMotifs(parent);
        var levels = Enumerable.Range(0, parent.Levels.Count).Where(k => used[k].Count > 0).ToArray();
        var parentHash = options.Distinct ? NetworkHashOrDead(parent) : null;
        var random = SeededRandom.ForTensor(options.Seed, $"mutate/{parentId}/{n.ToString(CultureInfo.InvariantCulture)}");
        int same = 0, dead = 0, overLimit = 0;
        string? lastLimit = null;
        for (var attempt = 0; attempt < options.MaxTries; attempt++)
        {
            var level = levels[(int)random.Below((ulong)levels.Length)];
            var motif = used[level][(int)random.Below((ulong)used[level].Count)];
            var nodes = parent.Levels[level].Nodes;
            var (from, to) = Pair((int)random.Below((ulong)(nodes * (nodes - 1) / 2)), nodes);
            var oldOp = motif.Edges.FirstOrDefault(e => e.From == from && e.To == to)?.Op ?? Primitives.None;
            var choices = alphabets[level].Where(op => op != oldOp).ToArray();
            var newOp = choices[(int)random.Below((ulong)choices.Length)];

            var record = new MutationRecord(level, motif.Name, from, to, oldOp, newOp, attempt);
            var draft = Apply(parent, level, motif, from, to, newOp) with { Name = id, Id = id, Meta = MutantMeta(parent.Meta, parentId, record) };
            var json = GenotypeJson.Serialize(draft);
            Genotype mutant;
            try { mutant = GenotypeReader.Parse(System.Text.Encoding.UTF8.GetBytes(json), id, id); }
            catch (InputException e)
            {
                overLimit++;
                lastLimit = e.Problem;
                continue;
            }
            if (options.Distinct)
            {
                // A dead parent has no network: any live mutant differs from it.
                var hash = NetworkHashOrDead(mutant);
                if (hash is null) { dead++; continue; }
                if (hash == parentHash) { same++; continue; }
            }
            return new MutantResult(parentId, id, json, mutant, record, new RetryCounts(same, dead, overLimit), null);
        }
        var counts = new RetryCounts(same, dead, overLimit);
        var why = new List<string>();
        if (same > 0) why.Add($"{same} gave the parent's network");
        if (dead > 0) why.Add($"{dead} a dead cell");
        if (overLimit > 0) why.Add($"{overLimit} broke a genotype limit ({lastLimit})");
        return Failed(parentId, id, counts, $"no mutation found in {options.MaxTries:N0} draws: {string.Join(", ", why)}");
    }

    private static MutantResult Failed(string parentId, string id, RetryCounts counts, string reason) =>
        new(parentId, id, null, null, null, counts, reason);

    /// <summary>The network hash under the merge mode, or null for a dead cell.</summary>
    private string? NetworkHashOrDead(Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        return liveness.Cell(genotype).OutputIsLive ? GenotypeHasher.NetworkHash(genotype, liveness, options.Merge) : null;
    }

    /// <summary>Per level, the motifs reachable from the cell through edges naming them, in file order.</summary>
    public static List<Motif>[] UsedMotifs(Genotype genotype)
    {
        var used = new List<Motif>[genotype.Levels.Count];
        used[genotype.TopLevel] = [genotype.Cell];
        for (var k = genotype.TopLevel; k > 0; k--)
        {
            var names = used[k].SelectMany(m => m.Edges).Select(e => e.Op).ToHashSet(StringComparer.Ordinal);
            used[k - 1] = genotype.Levels[k - 1].Motifs.Where(m => names.Contains(m.Name)).ToList();
        }
        return used;
    }

    /// <summary>Pair number <paramref name="p"/> in the order (0,1), (0,2), ..., (0,n-1), (1,2), ...</summary>
    public static (int From, int To) Pair(int p, int nodes)
    {
        for (var i = 0; i < nodes - 1; i++)
        {
            var count = nodes - 1 - i;
            if (p < count) return (i, i + 1 + p);
            p -= count;
        }
        throw new ArgumentOutOfRangeException(nameof(p));
    }

    /// <summary>The parent with one pair of one motif relabelled: the edge keeps its place, a new edge goes last, `none` removes it.</summary>
    private static Genotype Apply(Genotype parent, int level, Motif motif, int from, int to, string op)
    {
        var edges = new List<Edge>(motif.Edges.Count + 1);
        var found = false;
        foreach (var edge in motif.Edges)
        {
            if (edge.From == from && edge.To == to)
            {
                found = true;
                if (op != Primitives.None) edges.Add(new Edge(from, to, op, edges.Count));
                continue;
            }
            edges.Add(edge with { Index = edges.Count });
        }
        if (!found && op != Primitives.None) edges.Add(new Edge(from, to, op, edges.Count));
        var changed = new Motif(motif.Name, edges);
        var levels = parent.Levels.ToArray();
        levels[level] = new Level(levels[level].Nodes, levels[level].Motifs.Select(m => m.Name == motif.Name ? changed : m).ToList());
        return parent with { Levels = levels };
    }

    /// <summary>The parent's meta fields, then `parent` and `mutation` (replacing any the parent carried: a mutant of a mutant names its own parent).</summary>
    public static string MutantMeta(string? parentMeta, string parentId, MutationRecord record)
    {
        using var stream = new MemoryStream();
        using (var writer = JsonOutput.Writer(stream))
        {
            writer.WriteStartObject();
            if (parentMeta is not null)
            {
                using var document = JsonDocument.Parse(parentMeta);
                foreach (var property in document.RootElement.EnumerateObject())
                    if (property.Name is not ("parent" or "mutation")) property.WriteTo(writer);
            }
            writer.WriteString("parent", parentId);
            writer.WriteStartObject("mutation");
            writer.WriteNumber("level", record.Level);
            writer.WriteString("motif", record.Motif);
            writer.WriteStartArray("pair");
            writer.WriteNumberValue(record.From);
            writer.WriteNumberValue(record.To);
            writer.WriteEndArray();
            writer.WriteString("old", record.OldOp);
            writer.WriteString("new", record.NewOp);
            writer.WriteNumber("retries", record.Retries);
            writer.WriteEndObject();
            writer.WriteEndObject();
        }
        return System.Text.Encoding.UTF8.GetString(stream.ToArray());
    }
}
