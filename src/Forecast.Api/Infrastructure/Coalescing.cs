namespace Forecast.Api.Infrastructure;

/// <summary>Runs one read for many concurrent callers asking the same question, without ever answering from a read
/// that began before the caller asked.</summary>
/// <remarks>
/// While a read for a key is running, callers that arrive join the next read, which starts when the running one
/// ends; so every answer comes from a read started after its caller arrived (a PostgreSQL statement sees the
/// data committed before it starts), the same guarantee as a read of one's own. With many clients polling one
/// sequence this turns thousands of small queries a second into at most one running query and one waiting
/// per key; a caller waits at most about two query durations. Failures reach every caller of that read.
/// With a <c>reuseFor</c> above zero, a caller arriving within that time of the start of the last successful
/// read gets its answer at once: answers may then be that much older than the caller's request (and never more),
/// which keeps a busy key from being re-read back to back. With a <c>refreshWithin</c> above zero, a caller arriving
/// later than that, but within <c>reuseFor + refreshWithin</c>, also gets the last answer at once while one read
/// refreshes it in the background (the stale-while-revalidate of RFC 5861, 3): when the database is slow, pollers
/// are not all held behind the one read they share. Answers are then at most <c>reuseFor + refreshWithin</c> older
/// than the request. <see cref="Forget"/> drops a key's answer when the process itself changed what it reads, so
/// neither reuse nor refresh ever hides the process's own writes.
/// </remarks>
public sealed class Coalescing<TKey, TValue>(TimeSpan reuseFor = default, TimeSpan refreshWithin = default)
    where TKey : notnull
{
    /// <summary>Expired answers are swept once more than this many are kept (keys may come from the public).</summary>
    const int SweepAbove = 1024;

    readonly long _reuseTicks = (long)(reuseFor.TotalSeconds * System.Diagnostics.Stopwatch.Frequency);
    readonly long _keepTicks = (long)((reuseFor + (reuseFor > TimeSpan.Zero ? refreshWithin : TimeSpan.Zero)).TotalSeconds
        * System.Diagnostics.Stopwatch.Frequency);
    readonly Dictionary<TKey, (long StartedAt, TValue Value)> _recent = [];
    // Bumped by Forget: a read that began before a Forget must not leave its answer for reuse.
    readonly Dictionary<TKey, long> _generation = [];
    long _allGeneration;

    /// <summary>Drops the reusable answer of the key: the next caller reads afresh, and a read already running
    /// does not leave its (older) answer behind.</summary>
    public void Forget(TKey key)
    {
        lock (_slots)
        {
            _recent.Remove(key);
            _generation[key] = _generation.GetValueOrDefault(key) + 1;
        }
    }

    /// <summary>Drops every reusable answer, as <see cref="Forget"/> does for one key.</summary>
    public void ForgetAll()
    {
        lock (_slots)
        {
            _recent.Clear();
            _allGeneration++;
        }
    }

    (long, long) GenerationOf(TKey key) => (_generation.GetValueOrDefault(key), _allGeneration);

    void Keep(TKey key, long startedAt, TValue value)
    {
        _recent[key] = (startedAt, value);
        if (_recent.Count <= SweepAbove) return;
        var now = System.Diagnostics.Stopwatch.GetTimestamp();
        foreach (var (k, recent) in _recent.ToList())
            if (now - recent.StartedAt > _keepTicks) _recent.Remove(k);
        // Generations only matter while a read is running; keys without one can start again from zero.
        foreach (var k in _generation.Keys.Where(k => !_slots.ContainsKey(k)).ToList()) _generation.Remove(k);
    }

    /// <summary>A key being read: the callers waiting for the next read, and the read they brought.</summary>
    sealed class Slot
    {
        public (TaskCompletionSource<TValue> Answer, Func<Task<TValue>> Read)? Next;
    }

    readonly Dictionary<TKey, Slot> _slots = [];

    /// <param name="read">The read; it gets no caller's cancellation token, because several callers share it.</param>
    public Task<TValue> GetAsync(TKey key, Func<Task<TValue>> read, CancellationToken ct)
    {
        lock (_slots)
        {
            Slot? slot;
            if (_reuseTicks > 0 && _recent.TryGetValue(key, out var recent))
            {
                var age = System.Diagnostics.Stopwatch.GetTimestamp() - recent.StartedAt;
                if (age <= _reuseTicks) return Task.FromResult(recent.Value);
                if (age <= _keepTicks)
                {
                    if (!_slots.ContainsKey(key))
                    {
                        // Refresh in the background; nobody waits for it, so its failure is only observed here
                        // (the next caller past the refresh time reads for itself and gets the failure).
                        _slots[key] = slot = new Slot();
                        var refresh = NewAnswer();
                        _ = refresh.Task.ContinueWith(static t => _ = t.Exception, CancellationToken.None,
                            TaskContinuationOptions.OnlyOnFaulted | TaskContinuationOptions.ExecuteSynchronously,
                            TaskScheduler.Default);
                        _ = RunAsync(key, slot, refresh, read);
                    }
                    return Task.FromResult(recent.Value);
                }
            }
            if (_slots.TryGetValue(key, out slot))
            {
                slot.Next ??= (NewAnswer(), read);
                return slot.Next.Value.Answer.Task.WaitAsync(ct);
            }
            _slots[key] = slot = new Slot();
            var answer = NewAnswer();
            _ = RunAsync(key, slot, answer, read);
            return answer.Task.WaitAsync(ct);
        }
    }

    /// <summary>Reads for the key until no caller is waiting, then forgets the key.</summary>
    async Task RunAsync(TKey key, Slot slot, TaskCompletionSource<TValue> answer, Func<Task<TValue>> read)
    {
        await Task.Yield(); // never read under the lock
        while (true)
        {
            try
            {
                long startedAt;
                (long, long) generation;
                lock (_slots)
                {
                    startedAt = System.Diagnostics.Stopwatch.GetTimestamp();
                    generation = GenerationOf(key);
                }
                var value = await read();
                if (_reuseTicks > 0)
                {
                    lock (_slots)
                    {
                        if (GenerationOf(key) == generation) Keep(key, startedAt, value);
                    }
                }
                answer.TrySetResult(value);
            }
            catch (OperationCanceledException)
            {
                answer.TrySetCanceled();
            }
            catch (Exception e)
            {
                answer.TrySetException(e);
            }
            lock (_slots)
            {
                if (slot.Next is not { } next)
                {
                    _slots.Remove(key);
                    return;
                }
                slot.Next = null;
                (answer, read) = next;
            }
        }
    }

    static TaskCompletionSource<TValue> NewAnswer() => new(TaskCreationOptions.RunContinuationsAsynchronously);
}
