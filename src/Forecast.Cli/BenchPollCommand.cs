using System.Collections.Concurrent;
using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using System.Text;

namespace Forecast.Cli;

/// <summary><c>forecast bench-poll</c>: polls endpoints at fixed rates (an open loop) and reports each one's
/// latency percentiles.</summary>
/// <remarks>
/// Requests are sent on a schedule, not when the previous answer came back, because a population of dashboards
/// polls on timers: when the service stalls, requests pile up behind the stall instead of being put off. Each
/// latency therefore runs from the request's scheduled time to the end of its answer, which counts the waiting a
/// stall causes for every request scheduled during it (the correction for "coordinated omission", Tene 2013,
/// "How NOT to measure latency"; common practice in load testing). A request that fails or answers other than
/// 200 is counted apart and makes the command exit non-zero.
/// </remarks>
static class BenchPollCommand
{
    /// <summary>One polled endpoint: a name for the report, a path under the base address, requests per second.
    /// </summary>
    sealed record Target(string Name, string Path, double Rate);

    sealed class Tally(int capacity)
    {
        public readonly double[] LatencyMs = new double[capacity];
        public readonly float[] SentAtSeconds = new float[capacity];
        public int Count, Failed, Scheduled;
        public long Bytes;
        public string? FirstFailure;
    }

    public static Command Create()
    {
        var url = BenchShared.UrlOption();
        var key = new Option<string?>("--key")
        {
            Description = "a key sent as a bearer token, except to /v1/public/ paths, which dashboards poll without one",
        };
        var targets = new Option<string[]>("--target")
        {
            Required = true, AllowMultipleArgumentsPerToken = false,
            Description = "NAME=PATH@RATE, e.g. public=/v1/public/sequences/1/forecast@3000; repeat for more",
        };
        var duration = new Option<double>("--duration") { DefaultValueFactory = _ => 30, Description = "seconds measured" };
        var warmup = new Option<double>("--warmup") { DefaultValueFactory = _ => 3, Description = "seconds polled first, not counted" };
        var connections = new Option<int>("--connections")
        {
            DefaultValueFactory = _ => 64, Description = "most connections open at once (more requests wait for one)",
        };
        var timeline = new Option<bool>("--timeline")
        {
            Description = "also print, per target and second of the run, the requests sent, their p50, p99 and max",
        };
        var command = new Command("bench-poll", "Poll endpoints at fixed rates and report latency from the scheduled send time")
        {
            url, key, targets, duration, warmup, connections, timeline,
        };
        command.SetAction((parse, ct) => CliException.GuardAsync(() => Run(parse.GetValue(url)!, parse.GetValue(key),
            parse.GetValue(targets)!.Select(ParseTarget).ToList(), parse.GetValue(duration), parse.GetValue(warmup),
            parse.GetValue(connections), parse.GetValue(timeline), ct)));
        return command;
    }

    static Target ParseTarget(string text)
    {
        var eq = text.IndexOf('=');
        var at = text.LastIndexOf('@');
        if (eq <= 0 || at < eq + 2 || !text[(eq + 1)..].StartsWith('/')
            || !double.TryParse(text[(at + 1)..], NumberStyles.Float, CultureInfo.InvariantCulture, out var rate)
            || !(rate > 0 && rate <= 100_000))
        {
            throw new CliException($"--target {text}: expected NAME=PATH@RATE with PATH starting with / and 0 < RATE <= 100000");
        }
        return new Target(text[..eq], text[(eq + 1)..at], rate);
    }

    static async Task<int> Run(string url, string? key, List<Target> targets, double duration, double warmup,
        int connections, bool timeline, CancellationToken ct)
    {
        if (!(duration > 0) || warmup < 0) throw new CliException("--duration must be positive and --warmup not negative.");
        if (connections < 1) throw new CliException("--connections must be at least 1.");
        // Read once, when this process's first socket starts its engine (none has yet): socket reads continue on
        // the thread that saw them complete instead of being handed to the thread pool (see Poll).
        if (Environment.GetEnvironmentVariable("DOTNET_SYSTEM_NET_SOCKETS_INLINE_COMPLETIONS") is null)
            Environment.SetEnvironmentVariable("DOTNET_SYSTEM_NET_SOCKETS_INLINE_COMPLETIONS", "1");
        var baseAddress = new Uri(url);
        if (baseAddress.Scheme != "http") throw new CliException("--url must be an http:// address (no TLS here).");
        var requests = targets.Select(t => PollConnection.Request(baseAddress, t.Path,
            t.Path.StartsWith("/v1/public/", StringComparison.Ordinal) ? null : key)).ToArray();
        if (warmup > 0) await Poll(baseAddress, connections, targets, requests, warmup, ct);
        var tallies = await Poll(baseAddress, connections, targets, requests, duration, ct);
        return Report(targets, tallies, duration, timeline);
    }

    static int Report(List<Target> targets, Tally[] tallies, double duration, bool timeline)
    {
        var failed = 0;
        foreach (var (t, tally) in targets.Zip(tallies))
        {
            var ms = tally.LatencyMs.AsSpan(0, tally.Count).ToArray();
            Array.Sort(ms);
            var unanswered = tally.Scheduled - tally.Count - tally.Failed;
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{t.Name,-8} offered {t.Rate,6:F0}/s  answered {tally.Count / duration,7:F0}/s  ({tally.Count} ok of {tally.Scheduled} sent, {tally.Failed} failed, {unanswered} unanswered)  " +
                $"p50 {Percentile(ms, 0.50):F2} ms  p90 {Percentile(ms, 0.90):F2} ms  p99 {Percentile(ms, 0.99):F2} ms  " +
                $"p99.9 {Percentile(ms, 0.999):F2} ms  max {(ms.Length > 0 ? ms[^1] : double.NaN):F2} ms  " +
                $"{(tally.Count > 0 ? tally.Bytes / tally.Count : 0)} bytes"));
            if (tally.FirstFailure is not null) Console.WriteLine($"{t.Name,-8} first failure: {tally.FirstFailure}");
            failed += tally.Failed + unanswered;
        }
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"client   cpu {System.Diagnostics.Process.GetCurrentProcess().TotalProcessorTime.TotalSeconds:F1} s in all (warm-up included)"));
        if (timeline)
        {
            foreach (var (t, tally) in targets.Zip(tallies)) PrintTimeline(t.Name, tally);
        }
        return failed == 0 ? 0 : 1;
    }

    static void PrintTimeline(string name, Tally tally)
    {
        var bySecond = Enumerable.Range(0, tally.Count).GroupBy(i => (int)tally.SentAtSeconds[i]).OrderBy(g => g.Key);
        foreach (var second in bySecond)
        {
            var ms = second.Select(i => tally.LatencyMs[i]).Order().ToArray();
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{name,-8} second {second.Key,4}  sent {ms.Length,6}  p50 {Percentile(ms, 0.5):F1} ms  p99 {Percentile(ms, 0.99):F1} ms  max {ms[^1]:F1} ms"));
        }
    }

    /// <summary>The nearest-rank percentile of sorted values (Hyndman and Fan 1996, definition 1).</summary>
    internal static double Percentile(double[] sorted, double q) =>
        sorted.Length == 0 ? double.NaN : sorted[Math.Clamp((int)Math.Ceiling(q * sorted.Length) - 1, 0, sorted.Length - 1)];

    /// <summary>A request due at <see cref="Scheduled"/> (a Stopwatch timestamp).</summary>
    readonly record struct Job(int Target, long Scheduled);

    /// <summary>Sends every target's requests on its schedule for <paramref name="seconds"/>, then waits up to
    /// 10 s for the answers still on their way. A request that falls due goes out at once on a free connection;
    /// when all are busy it waits in a queue, in order, for the first connection to be free, and that wait is
    /// part of its latency.</summary>
    /// <remarks>
    /// The schedule runs on a thread of its own and wakes about every millisecond (Thread.Sleep(1)). A late
    /// wake-up sends the requests that fell due together and their latency counts the delay, so the client's
    /// timer adds to every latency it reports: Task.Delay(1) woke after 3.7 ms (median) on the 2-core test machine
    /// and Thread.Sleep(1) after 1.1 ms, a difference of about 1.5 ms in the reported median and 3.5 ms in the 90th
    /// percentile that was the client's, not the service's.
    /// A connection that finishes an answer takes the next queued request itself, and <see cref="Run"/> asks the
    /// runtime to continue socket reads on the thread that saw them complete, so a request costs no hand-off
    /// between threads. Polling the service alone at 3,000/s for 12 s (warm-up included) on the test machine, this
    /// client used 2.7-3.8 s of CPU, against 4.5-4.9 s when a channel handed each request to a waiting connection.
    /// </remarks>
    static async Task<Tally[]> Poll(Uri baseAddress, int connections, List<Target> targets, byte[][] requests,
        double seconds, CancellationToken ct)
    {
        var tallies = targets.Select(t => new Tally((int)Math.Ceiling(t.Rate * seconds) + 1)).ToArray();
        var sent = new long[targets.Count];
        // Each phase has its own connections and its own token, so nothing of a phase outlives it.
        using var phase = CancellationTokenSource.CreateLinkedTokenSource(ct);
        var pool = Enumerable.Range(0, connections).Select(_ => new PollConnection(baseAddress.Host, baseAddress.Port)).ToList();
        var free = new ConcurrentStack<PollConnection>(pool);
        var waiting = new ConcurrentQueue<Job>();
        var running = 0;
        var start = Stopwatch.GetTimestamp();

        async Task Serve(PollConnection c, Job job)
        {
            do await Send(c, requests[job.Target], start, job.Scheduled, tallies[job.Target], phase.Token);
            while (!phase.IsCancellationRequested && waiting.TryDequeue(out job));
            free.Push(c);
            Interlocked.Decrement(ref running);
        }
        void Begin(PollConnection c, Job job)
        {
            Interlocked.Increment(ref running);
            _ = Serve(c, job);   // runs here until its first read waits; Send records every outcome itself
        }
        void TakeWaiting()   // a request queued just as a connection went free waits for this, a tick at most
        {
            while (!waiting.IsEmpty && free.TryPop(out var c))
            {
                if (waiting.TryDequeue(out var job)) Begin(c, job);
                else free.Push(c);
            }
        }

        var end = start + (long)(seconds * Stopwatch.Frequency);
        await OnOwnThread(() =>
        {
            TakeWaiting();
            var now = Stopwatch.GetTimestamp();
            for (var i = 0; i < targets.Count; i++)
            {
                var interval = Stopwatch.Frequency / targets[i].Rate;
                for (long due; (due = start + (long)(sent[i] * interval)) <= now && due < end; sent[i]++)
                {
                    if (waiting.IsEmpty && free.TryPop(out var c)) Begin(c, new Job(i, due));
                    else waiting.Enqueue(new Job(i, due));
                }
            }
            return now < end;
        }, ct);
        var drainUntil = Stopwatch.GetTimestamp() + 10 * Stopwatch.Frequency;
        await OnOwnThread(() =>
        {
            TakeWaiting();
            return (!waiting.IsEmpty || Volatile.Read(ref running) > 0) && Stopwatch.GetTimestamp() < drainUntil;
        }, ct);
        if (!waiting.IsEmpty || Volatile.Read(ref running) > 0)
        {
            phase.Cancel();   // what is still unanswered after 10 s is counted as unanswered
            foreach (var c in pool) c.Dispose();
            await OnOwnThread(() => Volatile.Read(ref running) > 0, CancellationToken.None);
        }
        foreach (var c in pool) c.Dispose();
        for (var i = 0; i < targets.Count; i++) tallies[i].Scheduled = (int)sent[i];
        return tallies;
    }

    /// <summary>Calls <paramref name="step"/> about every millisecond on a thread of its own until it returns
    /// false.</summary>
    static Task OnOwnThread(Func<bool> step, CancellationToken ct)
    {
        var done = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        var thread = new Thread(() =>
        {
            try
            {
                while (step())
                {
                    ct.ThrowIfCancellationRequested();
                    Thread.Sleep(1);
                }
                done.SetResult();
            }
            catch (OperationCanceledException e) { done.SetCanceled(e.CancellationToken); }
            catch (Exception e) { done.SetException(e); }
        }) { IsBackground = true, Name = "bench-poll schedule" };
        thread.Start();
        return done.Task;
    }

    static async Task Send(PollConnection connection, byte[] request, long start, long scheduled, Tally tally,
        CancellationToken phase)
    {
        try
        {
            var (status, bodyBytes) = await connection.GetAsync(request, phase);
            var ms = Stopwatch.GetElapsedTime(scheduled).TotalMilliseconds;
            if (status != 200)
            {
                Fail(tally, $"{status} from {Encoding.ASCII.GetString(request).Split(' ')[1]}");
                return;
            }
            var slot = Interlocked.Increment(ref tally.Count) - 1;
            tally.LatencyMs[slot] = ms;
            tally.SentAtSeconds[slot] = (float)((scheduled - start) / (double)Stopwatch.Frequency);
            Interlocked.Add(ref tally.Bytes, bodyBytes);
        }
        catch (Exception) when (phase.IsCancellationRequested)
        {
            // the phase was stopped: the request stays unanswered
        }
        catch (Exception e)
        {
            Fail(tally, $"{e.GetType().Name} from {Encoding.ASCII.GetString(request).Split(' ')[1]}: {e.Message}");
        }
    }

    static void Fail(Tally tally, string why)
    {
        Interlocked.Increment(ref tally.Failed);
        Interlocked.CompareExchange(ref tally.FirstFailure, why, null);
    }
}
