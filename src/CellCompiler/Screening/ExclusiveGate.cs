namespace CellCompiler.Screening;

/// <summary>
/// Lets parallel work run side by side but gives latency measurement the machine to itself:
/// an exclusive section waits until every shared section has finished and holds new ones back.
/// </summary>
public sealed class ExclusiveGate : IDisposable
{
    private readonly ReaderWriterLockSlim _lock = new(LockRecursionPolicy.NoRecursion);

    public static readonly ExclusiveGate None = new();

    public T Shared<T>(Func<T> work)
    {
        _lock.EnterReadLock();
        try { return work(); }
        finally { _lock.ExitReadLock(); }
    }

    public T Exclusive<T>(Func<T> work)
    {
        _lock.EnterWriteLock();
        try { return work(); }
        finally { _lock.ExitWriteLock(); }
    }

    public void Dispose() => _lock.Dispose();
}
