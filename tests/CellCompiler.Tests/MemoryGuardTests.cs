using CellCompiler.Screening;

namespace CellCompiler.Tests;

/// <summary>
/// The memory guard that all workers of one process share (issue 10): reservations together never
/// exceed the capacity, a waiting worker is served first come first served, and a need larger than
/// the whole capacity is refused at once instead of waiting forever.
/// </summary>
public sealed class MemoryGuardTests
{
    private static readonly TimeSpan Patience = TimeSpan.FromMilliseconds(300);

    /// <summary>True when the task is still waiting after a while (a guard that grants at once fails this).</summary>
    private static async Task<bool> StillWaiting(Task task) => await Task.WhenAny(task, Task.Delay(Patience)) != task;

    private static Task<T> Granted<T>(Task<T> task) => task.WaitAsync(TimeSpan.FromSeconds(30));

    [Fact]
    public void A_need_larger_than_the_capacity_is_refused_at_once()
    {
        var guard = new MemoryGuard(1000);
        Assert.Null(guard.Reserve(1001));
        using var whole = guard.Reserve(1000);
        Assert.NotNull(whole);
    }

    [Fact]
    public async Task A_second_worker_waits_until_the_first_releases_enough()
    {
        var guard = new MemoryGuard(1000);
        var first = guard.Reserve(600)!;
        var second = Task.Run(() => guard.Reserve(600));
        // While the first holds 600 of 1000, another 600 must not be granted.
        Assert.True(await StillWaiting(second));
        first.Dispose();
        using var granted = await Granted(second);
        Assert.NotNull(granted);
    }

    [Fact]
    public async Task Reservations_that_fit_together_are_held_at_once()
    {
        var guard = new MemoryGuard(1000);
        using var a = guard.Reserve(400);
        var b = Task.Run(() => guard.Reserve(600));
        using var both = await Granted(b);
        Assert.NotNull(both);
    }

    [Fact]
    public async Task A_small_need_does_not_overtake_a_larger_one_waiting_before_it()
    {
        var guard = new MemoryGuard(1000);
        var first = guard.Reserve(500)!;
        var large = OnItsOwnThread(() => guard.Reserve(800));
        await Queued(guard, 1); // the 800 waits behind the 500
        var small = OnItsOwnThread(() => guard.Reserve(100)); // would fit now, but came later
        await Queued(guard, 2);
        Assert.True(await StillWaiting(small));
        first.Dispose();
        using var largeGranted = await Granted(large);
        // 800 held: the 100 fits beside it and is served next.
        using var smallGranted = await Granted(small);
        Assert.NotNull(largeGranted);
        Assert.NotNull(smallGranted);
    }

    /// <summary>A dedicated thread, so that a busy thread pool cannot reorder the requests.</summary>
    private static Task<T> OnItsOwnThread<T>(Func<T> work) =>
        Task.Factory.StartNew(work, CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default);

    /// <summary>Waits until this many requests are queued (a guard that grants at once never gets there).</summary>
    private static async Task Queued(MemoryGuard guard, long count)
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (guard.Waiting < count)
        {
            Assert.True(clock.Elapsed < TimeSpan.FromSeconds(30), $"{guard.Waiting} of {count} requests queued");
            await Task.Delay(5);
        }
    }

    [Fact]
    public void Released_memory_is_available_again()
    {
        var guard = new MemoryGuard(1000);
        for (var i = 0; i < 100; i++)
        {
            using var r = guard.Reserve(1000);
            Assert.NotNull(r);
        }
        using var last = guard.Reserve(1000);
        Assert.NotNull(last);
    }
}
