using System.ComponentModel.DataAnnotations;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Workers;

/// <summary>Section <c>RefitWorker</c>: the background refit loop of this instance.</summary>
public sealed class RefitWorkerOptions
{
    public const string Section = "RefitWorker";

    /// <summary>Run the worker in this instance (any number of instances may).</summary>
    public bool Enabled { get; init; } = true;

    /// <summary>Pause between polls of the queue when it is empty.</summary>
    [Range(typeof(TimeSpan), "00:00:00.010", "01:00:00")] public TimeSpan PollInterval { get; init; } = TimeSpan.FromMilliseconds(250);

    /// <summary>How long a claimed refit is held before another worker may take it over (a fit must finish within it).</summary>
    [Range(typeof(TimeSpan), "00:00:05", "01:00:00")] public TimeSpan Lease { get; init; } = TimeSpan.FromMinutes(5);

    /// <summary>How often the schedule (RefitSchedule: hourly to day 3, 6-hourly to day 30, then daily) is checked.</summary>
    [Range(typeof(TimeSpan), "00:00:01", "01:00:00")] public TimeSpan ScheduleCheck { get; init; } = TimeSpan.FromMinutes(1);

    /// <summary>Longest pause after failed rounds (the database away): the pause doubles from the poll interval up
    /// to this, and a good round resets it.</summary>
    [Range(typeof(TimeSpan), "00:00:00.010", "00:10:00")] public TimeSpan MaxBackoff { get; init; } = TimeSpan.FromSeconds(5);
}

/// <summary>Keeps forecasts current: opens sequences for big new events, runs queued refits, queues scheduled ones.</summary>
public sealed class RefitWorker(
    RefitProcessor processor, RefitQueue queue, SequenceStore sequences, IOptions<RefitWorkerOptions> options,
    TimeProvider clock, ILogger<RefitWorker> log, Forecasts.CoalescedReads reads) : BackgroundService
{
    readonly string _name = $"{Environment.MachineName}:{Environment.ProcessId}:{Guid.NewGuid():N}";

    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        var o = options.Value;
        await RetryUntilDone(() => sequences.ApplySettingsAsync(stoppingToken), stoppingToken);
        if (!o.Enabled)
        {
            log.LogInformation("Refit worker disabled (RefitWorker:Enabled is false)");
            return;
        }
        var nextSchedule = DateTime.MinValue;
        var failures = 0;
        while (!stoppingToken.IsCancellationRequested)
        {
            var pause = o.PollInterval;
            try
            {
                var now = clock.GetUtcNow().UtcDateTime;
                if (now >= nextSchedule)
                {
                    var queued = await queue.QueueScheduledAsync(now, stoppingToken);
                    if (queued > 0) log.LogInformation("Queued {Count} scheduled refits", queued);
                    nextSchedule = now + o.ScheduleCheck;
                }
                RefitRound round;
                do
                {
                    round = await processor.RunOnceAsync(_name, o.Lease, stoppingToken);
                    foreach (var id in round.Opened) log.LogInformation("Opened sequence {SequenceId} automatically", id);
                    if (round.Error is not null)
                        log.LogWarning("Refit of sequence {SequenceId} failed: {Error}", round.SequenceId, round.Error);
                    else if (round.Forecast is { } f)
                    {
                        reads.Forget(f.SequenceId);   // pollers of this process see the new draft at once
                        log.LogInformation("Sequence {SequenceId}: forecast {Number} ({Reason})", f.SequenceId, f.Number, f.Reason);
                    }
                } while (round.DidWork && !stoppingToken.IsCancellationRequested);
                if (failures > 0) log.LogInformation("Refit worker recovered after {Failures} failed rounds", failures);
                failures = 0;
            }
            catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e) when (!stoppingToken.IsCancellationRequested)
            {
                // Typically the database is away or restarting. The worker must outlive it (an exception escaping a
                // BackgroundService stops the host); the queue keeps the work for the next round.
                failures++;
                pause = Backoff(o, failures);
                if (DatabaseFailure.IsUnavailable(e))
                    log.LogWarning("Refit worker round {Failures} failed, database unavailable ({Error}); retrying in {PauseMs} ms",
                        failures, e.Message, pause.TotalMilliseconds);
                else
                    log.LogWarning(e, "Refit worker round {Failures} failed; retrying in {PauseMs} ms", failures, pause.TotalMilliseconds);
            }
            try
            {
                await Task.Delay(pause, clock, stoppingToken);
            }
            catch (OperationCanceledException)
            {
                return;
            }
        }
    }

    /// <summary>The poll interval doubled per consecutive failure, at most <see cref="RefitWorkerOptions.MaxBackoff"/>.</summary>
    public static TimeSpan Backoff(RefitWorkerOptions o, int failures)
    {
        var factor = Math.Pow(2, Math.Min(failures, 20));
        var ms = Math.Min(o.PollInterval.TotalMilliseconds * factor, o.MaxBackoff.TotalMilliseconds);
        return TimeSpan.FromMilliseconds(Math.Max(ms, o.PollInterval.TotalMilliseconds));
    }

    async Task RetryUntilDone(Func<Task> action, CancellationToken ct)
    {
        while (!ct.IsCancellationRequested)
        {
            try
            {
                await action();
                return;
            }
            catch (Exception e) when (!ct.IsCancellationRequested)
            {
                log.LogWarning("Could not write the sequence settings ({Error}); retrying in 2 s", e.Message);
                await Task.Delay(TimeSpan.FromSeconds(2), clock, ct);
            }
        }
    }
}
