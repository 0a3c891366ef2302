using CellCompiler.Input;
using CellCompiler.Onnx;

namespace CellCompiler.Spaces;

/// <summary>
/// Uniform samples of a space, drawn with replacement, and what each one is. Sample i depends only on
/// the seed and i (its own stream of our seeded generator), so the samples, and every count made
/// from them, are the same whatever the number of workers.
/// </summary>
public sealed class SpaceSample
{
    internal SpaceSample(long seed, bool[] dead, UInt128[] keys, long inexact)
    {
        Seed = seed;
        Dead = dead;
        Keys = keys;
        InexactHashes = inexact;
    }

    public long Seed { get; }
    public int Count => Dead.Count;

    /// <summary>Whether sample i is a dead cell.</summary>
    public IReadOnlyList<bool> Dead { get; }

    /// <summary>The <see cref="NetworkKey"/> of sample i (default for a dead one).</summary>
    public IReadOnlyList<UInt128> Keys { get; }

    public long InexactHashes { get; }

    public long DeadCount => Dead.Count(d => d);
    public long LiveCount => Count - DeadCount;

    /// <summary>How many times each live network occurs in the sample.</summary>
    public IEnumerable<long> NetworkFrequencies()
    {
        var counts = new Dictionary<UInt128, long>();
        for (var i = 0; i < Count; i++)
            if (!Dead[i]) counts[Keys[i]] = counts.GetValueOrDefault(Keys[i]) + 1;
        return counts.Values;
    }
}

/// <summary>Draws <see cref="SpaceSample"/>s: every pair's op uniform over its level's alphabet, independently, so every genotype is equally likely.</summary>
public static class SpaceSampler
{
    private const int Chunk = 64;

    /// <summary>The stream of sample <paramref name="index"/>: the index mixed in through an odd multiplier and a SplitMix pass.</summary>
    public static SeededRandom StreamFor(long seed, long index)
    {
        var state = (ulong)seed ^ 0x5350414345UL; // "SPACE": apart from the streams of `cellc sample` with the same seed
        var key = SeededRandom.SplitMix(ref state);
        state = key ^ ((ulong)index * 0x9E6C63D0676A9A99UL);
        return new SeededRandom(SeededRandom.SplitMix(ref state));
    }

    /// <summary>Moves <paramref name="cursor"/> to sample <paramref name="index"/> of <paramref name="seed"/>.</summary>
    public static void Seek(SpaceCursor cursor, long seed, long index)
    {
        var random = StreamFor(seed, index);
        cursor.Draw(ref random);
    }

    public static SpaceSample Draw(SearchSpace space, MergeMode merge, int count, long seed, int workers,
        Action<long>? progress = null, TimeSpan? interval = null)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        var dead = new bool[count];
        var keys = new UInt128[count];
        long inexact = 0;
        ParallelWork.Run(count, Chunk, workers,
            () => (Cursor: new SpaceCursor(space), Classifier: new NetworkClassifier(space, merge), Inexact: new long[1]),
            (worker, start, end) =>
            {
                for (var i = start; i < end; i++)
                {
                    Seek(worker.Cursor, seed, i);
                    var result = worker.Classifier.Classify(worker.Cursor.Current);
                    dead[i] = result.Dead;
                    keys[i] = result.Key;
                    if (!result.Dead && !result.Exact) worker.Inexact[0]++;
                }
            },
            worker => Interlocked.Add(ref inexact, worker.Inexact[0]),
            progress, interval ?? TimeSpan.FromMilliseconds(250));
        return new SpaceSample(seed, dead, keys, inexact);
    }
}
