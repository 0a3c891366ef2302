namespace CellCompiler.Screening;

/// <summary>
/// Bounds the memory that the candidates of one process use at once, all workers together: a worker
/// reserves its candidate's estimated need before compiling or running it and waits (first come,
/// first served) while the others' reservations leave too little. A need larger than the whole
/// capacity is never granted: that candidate is reported as too large to run here. Reservations are
/// held only inside the shared (parallel) part of a check, never while waiting for the exclusive
/// latency measurement, so the two locks cannot wait on each other.
/// </summary>
public sealed class MemoryGuard(long capacityBytes)
{
    private readonly object _lock = new();
    private long _used;
    private long _nextTicket, _serving;

    public long CapacityBytes { get; } = capacityBytes;

    /// <summary>Half of the memory available to this process (its cgroup limit or the machine's).</summary>
    public static long DefaultCapacity => GC.GetGCMemoryInfo().TotalAvailableMemoryBytes / 2;

    public static MemoryGuard Unbounded { get; } = new(long.MaxValue);

    /// <summary>Reservations waiting to be granted (for tests: a queue's order is observable only through it).</summary>
    internal long Waiting
    {
        get { lock (_lock) return _nextTicket - _serving; }
    }

    /// <summary>Waits until <paramref name="bytes"/> fit and holds them until disposed; null if they never can.</summary>
    public Reservation? Reserve(long bytes)
    {
        if (bytes > CapacityBytes) return null;
        bytes = Math.Max(0, bytes);
        lock (_lock)
        {
            var ticket = _nextTicket++;
            while (ticket != _serving || _used + bytes > CapacityBytes) Monitor.Wait(_lock);
            _serving++;
            _used += bytes;
            Monitor.PulseAll(_lock);
        }
        return new Reservation(this, bytes);
    }

    private void Release(long bytes)
    {
        lock (_lock)
        {
            _used -= bytes;
            Monitor.PulseAll(_lock);
        }
    }

    public sealed class Reservation(MemoryGuard guard, long bytes) : IDisposable
    {
        private bool _released;

        public void Dispose()
        {
            if (_released) return;
            _released = true;
            guard.Release(bytes);
        }
    }
}
