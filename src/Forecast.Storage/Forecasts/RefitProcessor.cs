using Forecast.Storage.Sequences;

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
/// good fit) and the queue row is removed, so the next event or the schedule retries.</remarks>
public sealed class RefitProcessor(SequenceStore sequences, RefitQueue queue, ForecastService forecasts)
{
    public async Task<RefitRound> RunOnceAsync(string worker, TimeSpan lease, CancellationToken ct)
    {
        var opened = await sequences.OpenCandidatesAsync(ct);
        var claim = await queue.ClaimAsync(worker, lease, ct);
        if (claim is null) return new RefitRound(opened, null, null, null);
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
            await queue.ReleaseAsync(claim, CancellationToken.None);
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
            if (!ct.IsCancellationRequested) await queue.CompleteAsync(claim, CancellationToken.None);
        }
    }

    /// <summary>Runs rounds until nothing is left to do (the demo and tests use it); returns the rounds that did work.</summary>
    public async Task<IReadOnlyList<RefitRound>> DrainAsync(string worker, TimeSpan lease, CancellationToken ct)
    {
        var rounds = new List<RefitRound>();
        while (await RunOnceAsync(worker, lease, ct) is { DidWork: true } round) rounds.Add(round);
        return rounds;
    }
}
