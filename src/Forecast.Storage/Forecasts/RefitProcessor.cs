using System.Collections.Concurrent;
using System.Net.Sockets;
using Forecast.Storage.Sequences;
using Npgsql;

namespace Forecast.Storage.Forecasts;

/// <summary>What one round of <see cref="RefitProcessor.RunOnceAsync"/> did.</summary>
/// <param name="Opened">Sequences opened automatically.</param>
/// <param name="SequenceId">The sequence refitted, when a refit was claimed.</param>
/// <param name="Forecast">The forecast stored; null when none was needed or the fit failed.</param>
/// <param name="Error">Why the fit failed, when it did (also stored on the sequence).</param>
public sealed record RefitRound(IReadOnlyList<long> Opened, long? SequenceId, ForecastRecord? Forecast, string? Error)
{
    public bool DidWork => Opened.Count > 0 || SequenceId is not null;
}

/// <summary>One worker step: open sequences for new big events, then claim and run one refit.</summary>
/// <remarks>A failed fit never stops the worker: its message is stored on the sequence (and cleared by the next
/// good fit) and the queue row is removed, so the next event or the schedule retries. A database that goes away
/// mid-refit is not a failed fit: nothing is recorded on the sequence, and the claim, which cannot be handed back
/// while the database is away, is handed back at the start of the next round (otherwise the refit would wait for
/// its lease, 5 minutes by default, to run out).</remarks>
public sealed class RefitProcessor(SequenceStore sequences, RefitQueue queue, ForecastService forecasts)
{
    readonly ConcurrentQueue<RefitClaim> _stranded = new();

    public async Task<RefitRound> RunOnceAsync(string worker, TimeSpan lease, CancellationToken ct)
    {
        await ReleaseStrandedAsync(ct);
        var opened = await sequences.OpenCandidatesAsync(ct);
        var claim = await queue.ClaimAsync(worker, lease, ct);
        if (claim is null) return new RefitRound(opened, null, null, null);
        var handedBack = false;
        try
        {
            var s = await sequences.FindAsync(claim.SequenceId, ct);
            if (s is null || s.Status != "active") return new RefitRound(opened, claim.SequenceId, null, null);
            var record = await forecasts.ComputeAsync(claim.SequenceId, new ComputeOptions(), claim.Reason, keyId: null,
                skipIfUnchanged: claim.Reason == "event", ct);
            await sequences.RecordErrorAsync(claim.SequenceId, null, ct);
            return new RefitRound(opened, claim.SequenceId, record, null);
        }
        catch (OperationCanceledException) when (ct.IsCancellationRequested)
        {
            // Shutting down mid-fit: hand the refit back rather than drop it.
            handedBack = true;
            await HandBackAsync(claim);
            throw;
        }
        catch (Exception e) when (DatabaseFailure.IsUnavailable(e))
        {
            handedBack = true;
            await HandBackAsync(claim);
            throw;
        }
        catch (Exception e)
        {
            var message = $"{e.GetType().Name}: {e.Message}";
            await sequences.RecordErrorAsync(claim.SequenceId, message, ct);
            return new RefitRound(opened, claim.SequenceId, null, message);
        }
        finally
        {
            if (!handedBack && !ct.IsCancellationRequested) await queue.CompleteAsync(claim, CancellationToken.None);
        }
    }

    /// <summary>Runs rounds until nothing is left to do (the demo and tests use it); returns the rounds that did work.</summary>
    public async Task<IReadOnlyList<RefitRound>> DrainAsync(string worker, TimeSpan lease, CancellationToken ct)
    {
        var rounds = new List<RefitRound>();
        while (await RunOnceAsync(worker, lease, ct) is { DidWork: true } round) rounds.Add(round);
        return rounds;
    }

    /// <summary>Releases the claim now, or keeps it for the next round when the database cannot be reached.</summary>
    async Task HandBackAsync(RefitClaim claim)
    {
        try
        {
            await queue.ReleaseAsync(claim, CancellationToken.None);
        }
        catch (Exception e) when (DatabaseFailure.IsUnavailable(e))
        {
            _stranded.Enqueue(claim);
        }
    }

    async Task ReleaseStrandedAsync(CancellationToken ct)
    {
        while (_stranded.TryPeek(out var claim))
        {
            await queue.ReleaseAsync(claim, ct); // throws while the database is still away; the claim stays queued
            _stranded.TryDequeue(out _);
        }
    }
}

/// <summary>Tells a database that cannot be reached (stopped, restarting, refusing connections, timing out) from
/// an error of the request itself.</summary>
/// <remarks>Lives in Storage so that the refit worker and the API's 503 answer share one rule.</remarks>
public static class DatabaseFailure
{
    public static bool IsUnavailable(Exception e)
    {
        for (Exception? x = e; x is not null; x = x.InnerException)
        {
            switch (x)
            {
                case PostgresException pg:
                    // SQLSTATE class 08 (connection exception), 57P01-57P03 (shutdown, crash, starting up), 53300.
                    return pg.SqlState.StartsWith("08", StringComparison.Ordinal)
                        || pg.SqlState is PostgresErrorCodes.AdminShutdown or PostgresErrorCodes.CrashShutdown
                            or PostgresErrorCodes.CannotConnectNow or PostgresErrorCodes.TooManyConnections;
                case NpgsqlOperationInProgressException:
                    return false; // a command misused on a busy connection: a bug, not an outage
                case NpgsqlException:
                    // Not a server error: the connection failed (refused, reset, broken, pool exhausted, timed out).
                    return true;
                case SocketException or TimeoutException:
                    return true;
                case AggregateException a when a.InnerExceptions.Count > 0:
                    return a.InnerExceptions.All(IsUnavailable);
            }
        }
        return false;
    }
}
