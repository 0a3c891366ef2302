namespace CellCompiler.Screening;

/// <summary>How a population is screened: worker count and output order.</summary>
public sealed record RunSettings(int Jobs, bool Ordered);

/// <summary>
/// Screens a population with parallel workers while reading it lazily: at most a few candidates
/// per worker are in flight or waiting to be written, so memory stays flat whatever the
/// population size. Each record is handed to <c>emit</c> as soon as it is final (in input order
/// with <see cref="RunSettings.Ordered"/>, else in completion order); emit calls never overlap.
/// </summary>
public static class ScreeningRun
{
    public static void Execute(
        IEnumerable<Candidate> candidates,
        Func<Candidate, bool> include,
        Func<Candidate, CheckRecord> check,
        RunSettings settings,
        Action<CheckRecord> emit)
    {
        var jobs = Math.Max(1, settings.Jobs);
        using var slots = new SemaphoreSlim(jobs * 4);
        using var queue = new System.Collections.Concurrent.BlockingCollection<(long Sequence, Candidate Candidate)>(jobs * 2);
        var emitLock = new object();
        var pending = new Dictionary<long, CheckRecord>();
        long nextToEmit = 0;
        Exception? failure = null;

        void Deliver(long sequence, CheckRecord record)
        {
            lock (emitLock)
            {
                if (failure is not null) return;
                try
                {
                    if (!settings.Ordered)
                    {
                        emit(record);
                        slots.Release();
                        return;
                    }
                    pending[sequence] = record;
                    while (pending.Remove(nextToEmit, out var next))
                    {
                        emit(next);
                        nextToEmit++;
                        slots.Release();
                    }
                }
                catch (Exception e)
                {
                    // Writing the output failed (e.g. a full disk): stop everything and report it.
                    failure = e;
                    slots.Release(jobs * 4);
                }
            }
        }

        var workers = Enumerable.Range(0, jobs).Select(i => new Thread(() =>
        {
            foreach (var (sequence, candidate) in queue.GetConsumingEnumerable())
            {
                if (Volatile.Read(ref failure) is not null) continue;
                CheckRecord record;
                try { record = check(candidate); }
                catch (Exception e)
                {
                    // A bug must not end a run of hours: the candidate is reported, the run goes on.
                    record = CandidateChecker.InternalError(candidate, e);
                }
                Deliver(sequence, record);
            }
        }) { IsBackground = true, Name = $"cellc-worker-{i}" }).ToList();
        workers.ForEach(w => w.Start());

        try
        {
            long sequence = 0;
            foreach (var candidate in candidates)
            {
                if (!include(candidate)) continue;
                slots.Wait();
                if (Volatile.Read(ref failure) is not null) break;
                queue.Add((sequence++, candidate));
            }
        }
        finally
        {
            queue.CompleteAdding();
            workers.ForEach(w => w.Join());
        }
        if (failure is not null)
            throw new IOException($"writing the results failed: {failure.Message}", failure);
    }
}
