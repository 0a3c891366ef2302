using CellCompiler.Input;

namespace CellCompiler.Spaces;

/// <summary>Exact counts over every genotype of a space.</summary>
/// <param name="InexactHashes">Live genotypes whose hash hit the search budget (their network may be counted twice); 0 in every space tested.</param>
public sealed record EnumerationResult(long Genotypes, long Dead, long Networks, long InexactHashes)
{
    public long Live => Genotypes - Dead;
}

/// <summary>
/// Enumerates a space exactly, streamed: parallel workers take index ranges, each walks its range with
/// its own <see cref="SpaceCursor"/> (a genotype's index decodes to its labelling, so no list of
/// genotypes is held), and the distinct networks are kept only as 16-byte keys in one shared
/// <see cref="NetworkKeySet"/>. Memory is that set (proportional to the distinct networks, not to the
/// genotypes) plus one genotype per worker.
/// </summary>
public static class SpaceEnumerator
{
    /// <summary>Genotypes per hand-out: large enough that the shared counter and the seek cost nothing, small enough to balance the workers.</summary>
    private const int Chunk = 512;

    /// <param name="progress">Called with the number of genotypes done, from the calling thread, about every <paramref name="interval"/>.</param>
    public static EnumerationResult Run(SearchSpace space, MergeMode merge, int workers, Action<long>? progress = null, TimeSpan? interval = null)
    {
        if (space.Genotypes > long.MaxValue)
            throw new ArgumentException("the space has too many genotypes to enumerate", nameof(space));
        var total = (long)space.Genotypes;
        var keys = new NetworkKeySet();
        long dead = 0, inexact = 0;
        ParallelWork.Run(total, Chunk, workers,
            () => new Worker(new SpaceCursor(space), new NetworkClassifier(space, merge)),
            (worker, start, end) =>
            {
                worker.Cursor.Seek(start);
                for (var i = start; i < end; i++)
                {
                    if (i > start) worker.Cursor.Advance();
                    var result = worker.Classifier.Classify(worker.Cursor.Current);
                    if (result.Dead) { worker.Dead++; continue; }
                    if (!result.Exact) worker.Inexact++;
                    keys.Add(result.Key);
                }
            },
            worker =>
            {
                Interlocked.Add(ref dead, worker.Dead);
                Interlocked.Add(ref inexact, worker.Inexact);
            },
            progress, interval ?? TimeSpan.FromMilliseconds(250));
        return new EnumerationResult(total, dead, keys.Count, inexact);
    }

    private sealed class Worker(SpaceCursor cursor, NetworkClassifier classifier)
    {
        public SpaceCursor Cursor { get; } = cursor;
        public NetworkClassifier Classifier { get; } = classifier;
        public long Dead;
        public long Inexact;
    }
}
