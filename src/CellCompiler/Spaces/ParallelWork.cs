namespace CellCompiler.Spaces;

/// <summary>
/// Runs <paramref name="workers"/> long-running workers over the indices 0 to total-1, handed out in
/// chunks from one shared counter (so a slow chunk never holds the others up), and reports the number
/// of indices done every <c>interval</c> while they run. The first failure stops every worker and is
/// thrown as it was.
/// </summary>
internal static class ParallelWork
{
    public static void Run<TState>(long total, int chunk, int workers, Func<TState> newState, Action<TState, long, long> work,
        Action<TState> finish, Action<long>? progress, TimeSpan interval)
    {
        long next = 0, done = 0;
        var failed = 0;
        var tasks = Enumerable.Range(0, Math.Max(1, workers)).Select(_ => Task.Factory.StartNew(() =>
        {
            var state = newState();
            try
            {
                while (Volatile.Read(ref failed) == 0)
                {
                    var start = Interlocked.Add(ref next, chunk) - chunk;
                    if (start >= total) break;
                    var end = Math.Min(total, start + chunk);
                    work(state, start, end);
                    Interlocked.Add(ref done, end - start);
                }
                finish(state);
            }
            catch
            {
                Interlocked.Exchange(ref failed, 1);
                throw;
            }
        }, CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default)).ToArray();

        try
        {
            while (!Task.WaitAll(tasks, interval)) progress?.Invoke(Interlocked.Read(ref done));
        }
        catch (AggregateException e) when (e.InnerExceptions.Count > 0)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(e.InnerExceptions[0]).Throw();
        }
        progress?.Invoke(Interlocked.Read(ref done));
    }
}
