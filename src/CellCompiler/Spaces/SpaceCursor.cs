using System.Numerics;
using CellCompiler.Input;
using CellCompiler.Onnx;

namespace CellCompiler.Spaces;

/// <summary>
/// One genotype of a space at a time, named by its labelling: one digit per node pair, digit d of a
/// pair of level k meaning op d of that level's alphabet. A genotype's index is its labelling read as
/// a mixed-radix number (least significant digit first: the cell's pairs, then the motifs of the level
/// below, down to level 0; within a motif the pairs (0,1), (0,2), ..., (1,2), ...), so index 0 to
/// count-1 names every genotype exactly once and no list of genotypes is ever held. Moving to the next
/// index rebuilds only the motifs whose digits changed; the others are shared with the previous genotype.
/// Not thread-safe: one cursor per worker.
/// </summary>
public sealed class SpaceCursor
{
    private readonly SearchSpace _space;
    private readonly int[] _digits;
    private readonly int[] _bases;
    private readonly Slot[] _slots;     // motifs in digit order
    private readonly int[] _slotOfDigit;
    private readonly Motif[][] _motifs; // [level][index]
    private readonly (int From, int To)[][] _pairs;
    private readonly string[][] _alphabets;
    private readonly Level[] _levels;
    private readonly string _name;

    private readonly record struct Slot(int Level, int Motif, int FirstDigit);

    public SpaceCursor(SearchSpace space, string genotypeName = "space")
    {
        _space = space;
        _name = genotypeName;
        var levelCount = space.Levels.Count;
        _alphabets = Enumerable.Range(0, levelCount).Select(k => space.Alphabet(k).ToArray()).ToArray();
        _pairs = space.Levels.Select(l => PairsOf(l.Nodes)).ToArray();
        var slots = new List<Slot>();
        var bases = new List<int>();
        for (var k = levelCount - 1; k >= 0; k--)
            for (var m = 0; m < space.Levels[k].Motifs; m++)
            {
                slots.Add(new Slot(k, m, bases.Count));
                for (var p = 0; p < space.Levels[k].Pairs; p++) bases.Add(_alphabets[k].Length);
            }
        _slots = [.. slots];
        _bases = [.. bases];
        _digits = new int[_bases.Length];
        _slotOfDigit = new int[_bases.Length];
        for (var s = 0; s < _slots.Length; s++)
            for (var p = 0; p < space.Levels[_slots[s].Level].Pairs; p++) _slotOfDigit[_slots[s].FirstDigit + p] = s;
        _motifs = space.Levels.Select(l => new Motif[l.Motifs]).ToArray();
        _levels = new Level[levelCount];
        RebuildFrom(_slots.Length - 1);
    }

    /// <summary>The genotype of the current labelling.</summary>
    public Genotype Current { get; private set; } = null!;

    /// <summary>Moves to the genotype with this index (0 &lt;= index &lt; the space's genotype count).</summary>
    public void Seek(BigInteger index)
    {
        if (index.Sign < 0 || index >= _space.Genotypes) throw new ArgumentOutOfRangeException(nameof(index));
        for (var t = 0; t < _digits.Length; t++)
        {
            index = BigInteger.DivRem(index, _bases[t], out var digit);
            _digits[t] = (int)digit;
        }
        RebuildFrom(_slots.Length - 1);
    }

    /// <summary>Moves to the next index (an odometer step); false, and back at index 0, after the last genotype.</summary>
    public bool Advance()
    {
        for (var t = 0; t < _digits.Length; t++)
        {
            if (++_digits[t] < _bases[t])
            {
                RebuildFrom(_slotOfDigit[t]);
                return true;
            }
            _digits[t] = 0;
        }
        RebuildFrom(_slots.Length - 1);
        return false;
    }

    /// <summary>Moves to a uniformly random genotype: every digit drawn independently and uniformly from its level's alphabet.</summary>
    public void Draw(ref SeededRandom random)
    {
        for (var t = 0; t < _digits.Length; t++)
            _digits[t] = (int)random.Below((ulong)_bases[t]);
        RebuildFrom(_slots.Length - 1);
    }

    /// <summary>Rebuilds the motifs of slots 0 to <paramref name="lastSlot"/> (every digit at or below a changed one may have changed), then the genotype.</summary>
    private void RebuildFrom(int lastSlot)
    {
        var lowestLevelTouched = int.MaxValue;
        for (var s = 0; s <= lastSlot; s++)
        {
            var slot = _slots[s];
            _motifs[slot.Level][slot.Motif] = BuildMotif(slot);
            lowestLevelTouched = Math.Min(lowestLevelTouched, slot.Level);
        }
        for (var k = 0; k < _levels.Length; k++)
            if (k >= lowestLevelTouched || _levels[k] is null)
                _levels[k] = new Level(_space.Levels[k].Nodes, _motifs[k].ToArray());
        Current = new Genotype(_name, _levels.ToArray(), null, _space.Declarations);
    }

    private Motif BuildMotif(Slot slot)
    {
        var pairs = _pairs[slot.Level];
        var alphabet = _alphabets[slot.Level];
        var edges = new List<Edge>(pairs.Length);
        for (var p = 0; p < pairs.Length; p++)
        {
            var op = alphabet[_digits[slot.FirstDigit + p]];
            if (op != Primitives.None) edges.Add(new Edge(pairs[p].From, pairs[p].To, op, edges.Count));
        }
        return new Motif(_space.MotifName(slot.Level, slot.Motif), edges);
    }

    private static (int, int)[] PairsOf(int nodes)
    {
        var pairs = new List<(int, int)>(nodes * (nodes - 1) / 2);
        for (var i = 0; i < nodes - 1; i++)
            for (var j = i + 1; j < nodes; j++)
                pairs.Add((i, j));
        return [.. pairs];
    }
}
