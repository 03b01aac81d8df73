using Forecast.Api.Infrastructure;

namespace Forecast.Api.Tests.Resilience;

public class CoalescingTests
{
    /// <summary>A read that counts its runs and waits for the test to let it finish.</summary>
    sealed class GatedRead
    {
        public int Runs;
        public readonly List<TaskCompletionSource> Started = [.. Enumerable.Range(0, 8).Select(_ => new TaskCompletionSource())];
        public readonly List<TaskCompletionSource<int>> Gates = [.. Enumerable.Range(0, 8).Select(_ => new TaskCompletionSource<int>())];

        public async Task<int> Read()
        {
            var run = Interlocked.Increment(ref Runs) - 1;
            Started[run].SetResult();
            return await Gates[run].Task;
        }
    }

    [Fact]
    public async Task CallersArrivingDuringAReadShareTheNextReadNotTheRunningOne()
    {
        var c = new Coalescing<int, int>();
        var read = new GatedRead();
        var first = c.GetAsync(1, read.Read, CancellationToken.None);
        await read.Started[0].Task;
        var second = c.GetAsync(1, read.Read, CancellationToken.None);
        var third = c.GetAsync(1, read.Read, CancellationToken.None);

        read.Gates[0].SetResult(10);
        Assert.Equal(10, await first);
        await read.Started[1].Task;
        Assert.False(second.IsCompleted); // not answered from the read that began before it asked
        read.Gates[1].SetResult(20);
        Assert.Equal(20, await second);
        Assert.Equal(20, await third);
        Assert.Equal(2, read.Runs);
    }

    [Fact]
    public async Task DifferentKeysReadSeparatelyAndAFailureReachesEveryCallerOfThatRead()
    {
        var c = new Coalescing<int, int>();
        var a = new GatedRead();
        var b = new GatedRead();
        var x = c.GetAsync(1, a.Read, CancellationToken.None);
        var y = c.GetAsync(2, b.Read, CancellationToken.None);
        await a.Started[0].Task;
        await b.Started[0].Task;
        var x2 = c.GetAsync(1, a.Read, CancellationToken.None);
        a.Gates[0].SetException(new TimeoutException("database away"));
        await Assert.ThrowsAsync<TimeoutException>(() => x);
        await a.Started[1].Task;
        a.Gates[1].SetException(new TimeoutException("still away"));
        await Assert.ThrowsAsync<TimeoutException>(() => x2);
        b.Gates[0].SetResult(7);
        Assert.Equal(7, await y);

        // The key is forgotten once no caller waits: the next caller starts a fresh read.
        var z = c.GetAsync(1, a.Read, CancellationToken.None);
        await a.Started[2].Task;
        a.Gates[2].SetResult(3);
        Assert.Equal(3, await z);
    }

    [Fact]
    public async Task ACallerThatGivesUpIsCancelledWithoutCancellingTheSharedRead()
    {
        var c = new Coalescing<int, int>();
        var read = new GatedRead();
        using var cts = new CancellationTokenSource();
        var leaving = c.GetAsync(1, read.Read, cts.Token);
        var staying = c.GetAsync(1, read.Read, CancellationToken.None);
        await read.Started[0].Task;
        await cts.CancelAsync();
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => leaving);
        read.Gates[0].SetResult(5);
        await read.Started[1].Task;
        read.Gates[1].SetResult(6);
        Assert.Equal(6, await staying);
    }

    [Fact]
    public async Task WithinTheReuseTimeTheLastAnswerIsGivenAtOnceAndForgetEndsThat()
    {
        var c = new Coalescing<int, int>(TimeSpan.FromMinutes(5));
        var runs = 0;
        Task<int> Read() => Task.FromResult(++runs * 10);
        Assert.Equal(10, await c.GetAsync(1, Read, CancellationToken.None));
        var reused = c.GetAsync(1, Read, CancellationToken.None);
        Assert.True(reused.IsCompletedSuccessfully);   // no read: the answer of a read begun within the reuse time
        Assert.Equal(10, await reused);
        Assert.Equal(1, runs);
        Assert.Equal(20, await c.GetAsync(2, Read, CancellationToken.None));   // another key reads for itself
        c.Forget(1);
        Assert.Equal(30, await c.GetAsync(1, Read, CancellationToken.None));
        Assert.Equal(3, runs);
    }

    [Fact]
    public async Task AfterTheReuseTimeTheNextCallerReadsAfresh()
    {
        var c = new Coalescing<int, int>(TimeSpan.FromMilliseconds(1));
        var runs = 0;
        Task<int> Read() => Task.FromResult(++runs);
        Assert.Equal(1, await c.GetAsync(1, Read, CancellationToken.None));
        await Task.Delay(20);   // well past the 1 ms reuse time
        Assert.Equal(2, await c.GetAsync(1, Read, CancellationToken.None));
    }

    [Fact]
    public async Task AReadRunningWhenTheKeyIsForgottenDoesNotLeaveItsAnswerForReuse()
    {
        var c = new Coalescing<int, int>(TimeSpan.FromMinutes(5));
        var read = new GatedRead();
        var before = c.GetAsync(1, read.Read, CancellationToken.None);
        await read.Started[0].Task;
        c.Forget(1);                      // the process changed what the running read may already have seen
        read.Gates[0].SetResult(10);
        Assert.Equal(10, await before);   // its own caller asked before the change
        var after = c.GetAsync(1, read.Read, CancellationToken.None);
        await read.Started[1].Task;       // a fresh read, not the answer from before the change
        read.Gates[1].SetResult(20);
        Assert.Equal(20, await after);
        Assert.Equal(2, read.Runs);
    }

    [Fact]
    public async Task WithinTheRefreshTimeTheLastAnswerIsGivenAtOnceWhileOneReadRefreshesIt()
    {
        // Stale-while-revalidate (RFC 5861, 3): past the 1 ms reuse time but within the 5 min refresh time.
        var c = new Coalescing<int, int>(TimeSpan.FromMilliseconds(1), TimeSpan.FromMinutes(5));
        var read = await AnsweredOnce(c, TimeSpan.FromMilliseconds(20));

        var stale = c.GetAsync(1, read.Read, CancellationToken.None);
        Assert.True(stale.IsCompletedSuccessfully);          // not held behind the refresh
        Assert.Equal(10, await stale);
        await read.Started[1].Task;                          // the refresh runs in the background
        var during = c.GetAsync(1, read.Read, CancellationToken.None);
        Assert.Equal(10, await during);                      // still the last answer
        Assert.Equal(2, read.Runs);                          // and no second refresh while one runs
        read.Gates[1].SetResult(20);
        await WaitUntil(async () => await c.GetAsync(1, read.Read, CancellationToken.None) == 20);
    }

    [Fact]
    public async Task PastTheRefreshTimeTheCallerWaitsForAFreshRead()
    {
        var c = new Coalescing<int, int>(TimeSpan.FromMilliseconds(1), TimeSpan.FromMilliseconds(1));
        var read = await AnsweredOnce(c, TimeSpan.FromMilliseconds(50));   // well past 1 ms + 1 ms
        await AssertTheNextCallerWaitsForAFreshRead(c, read);
    }

    [Fact]
    public async Task AForgottenKeyIsNotServedFromItsOldAnswerWhileRefreshing()
    {
        var c = new Coalescing<int, int>(TimeSpan.FromMilliseconds(1), TimeSpan.FromMinutes(5));
        var read = await AnsweredOnce(c, TimeSpan.FromMilliseconds(20));
        c.Forget(1);            // this process changed what the read sees: its own change must show at once
        await AssertTheNextCallerWaitsForAFreshRead(c, read);
    }

    [Fact]
    public async Task AFailedRefreshLeavesTheLastAnswerUntilTheRefreshTimeEnds()
    {
        var c = new Coalescing<int, int>(TimeSpan.FromMilliseconds(1), TimeSpan.FromMilliseconds(300));
        var read = await AnsweredOnce(c, TimeSpan.FromMilliseconds(20));
        Assert.Equal(10, await c.GetAsync(1, read.Read, CancellationToken.None));
        await read.Started[1].Task;
        read.Gates[1].SetException(new TimeoutException("database away"));
        // The failure reached nobody; this caller may start another refresh, which waits on its gate.
        Assert.Equal(10, await c.GetAsync(1, read.Read, CancellationToken.None));
        await Task.Delay(400);  // past 1 ms + 300 ms: the caller reads for itself and gets the failure
        foreach (var gate in read.Gates.Skip(2)) gate.TrySetException(new TimeoutException("still away"));
        await Assert.ThrowsAsync<TimeoutException>(() => c.GetAsync(1, read.Read, CancellationToken.None));
    }

    /// <summary>Key 1 read once (answer 10), then <paramref name="wait"/> passed.</summary>
    static async Task<GatedRead> AnsweredOnce(Coalescing<int, int> c, TimeSpan wait)
    {
        var read = new GatedRead();
        var first = c.GetAsync(1, read.Read, CancellationToken.None);
        read.Gates[0].SetResult(10);
        Assert.Equal(10, await first);
        await Task.Delay(wait);
        return read;
    }

    /// <summary>The next caller of key 1 is not answered from before: it waits for read 2, and gets its answer.
    /// </summary>
    static async Task AssertTheNextCallerWaitsForAFreshRead(Coalescing<int, int> c, GatedRead read)
    {
        var next = c.GetAsync(1, read.Read, CancellationToken.None);
        await read.Started[1].Task;
        Assert.False(next.IsCompleted);
        read.Gates[1].SetResult(20);
        Assert.Equal(20, await next);
    }

    static async Task WaitUntil(Func<Task<bool>> condition)
    {
        for (var i = 0; i < 200; i++)
        {
            if (await condition()) return;
            await Task.Delay(10);
        }
        Assert.Fail("the condition did not hold within 2 s");
    }
}
