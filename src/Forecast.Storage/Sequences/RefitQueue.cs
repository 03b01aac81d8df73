using Dapper;
using Npgsql;

namespace Forecast.Storage.Sequences;

/// <summary>A claimed refit: the sequence, why, and the generation seen at claim time.</summary>
public sealed record RefitClaim(long SequenceId, string Reason, int Generation, string Worker);

/// <summary>The refit queue in PostgreSQL: one row per sequence at most, claimed with FOR UPDATE SKIP LOCKED and
/// leased, so any number of workers in any number of instances may run.</summary>
/// <remarks>
/// A claim takes the oldest unleased row that no other claimer has locked (SKIP LOCKED) and leases it for
/// <c>lease</c>; the fit runs outside any transaction. An event arriving meanwhile bumps the row's generation
/// instead of adding a row (coalescing), and <see cref="CompleteAsync"/> then keeps the row for another round
/// instead of deleting it. A worker that dies loses its lease, and the row becomes claimable again.
/// </remarks>
public sealed class RefitQueue(NpgsqlDataSource db)
{
    /// <summary>The claim statement, public so a test can run it inside a transaction of its own.</summary>
    public const string ClaimSql = """
        update refit_queue q set claimed_by = @worker, claimed_until = now() + @lease
        from (
            select sequence_id from refit_queue
            where claimed_until is null or claimed_until < now()
            order by requested_at, sequence_id
            for update skip locked
            limit 1
        ) next
        where q.sequence_id = next.sequence_id
        returning q.sequence_id, q.reason, q.generation, q.claimed_by as worker
        """;

    /// <summary>Queues a refit of <paramref name="sequenceId"/> (or bumps the pending one) in the caller's transaction.</summary>
    public static Task EnqueueAsync(NpgsqlConnection conn, NpgsqlTransaction? tx, long sequenceId, string reason,
        CancellationToken ct) =>
        conn.ExecuteAsync(new CommandDefinition("""
            insert into refit_queue as q (sequence_id, reason) values (@sequenceId, @reason)
            on conflict (sequence_id) do update set generation = q.generation + 1, reason = excluded.reason
            """, new { sequenceId, reason }, tx, cancellationToken: ct));

    public async Task EnqueueAsync(long sequenceId, string reason, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await EnqueueAsync(conn, null, sequenceId, reason, ct);
    }

    /// <summary>Claims the oldest pending refit no one else holds, or returns null.</summary>
    public async Task<RefitClaim?> ClaimAsync(string worker, TimeSpan lease, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<RefitClaim>(
            new CommandDefinition(ClaimSql, new { worker, lease }, cancellationToken: ct));
    }

    /// <summary>Ends a claim: deletes the row if nothing was queued since the claim, else releases it for the
    /// next round. Returns true when the row was deleted.</summary>
    public async Task<bool> CompleteAsync(RefitClaim claim, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var deleted = await conn.ExecuteAsync(new CommandDefinition("""
            delete from refit_queue where sequence_id = @SequenceId and generation = @Generation and claimed_by = @Worker
            """, claim, cancellationToken: ct));
        if (deleted == 1) return true;
        await conn.ExecuteAsync(new CommandDefinition("""
            update refit_queue set claimed_by = null, claimed_until = null
            where sequence_id = @SequenceId and claimed_by = @Worker
            """, claim, cancellationToken: ct));
        return false;
    }

    /// <summary>Gives a claim back unfinished (shutdown): the row stays, claimable at once.</summary>
    public async Task ReleaseAsync(RefitClaim claim, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            update refit_queue set claimed_by = null, claimed_until = null
            where sequence_id = @SequenceId and claimed_by = @Worker
            """, claim, cancellationToken: ct));
    }

    /// <summary>Pending rows (claimed or not).</summary>
    public async Task<int> PendingAsync(CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.ExecuteScalarAsync<int>(new CommandDefinition("select count(*)::int from refit_queue",
            cancellationToken: ct));
    }

    /// <summary>Queues scheduled refits: every active sequence whose latest forecast is older than its cadence
    /// (<see cref="RefitSchedule.Interval"/>) and that has no pending refit. Returns how many were queued.</summary>
    public async Task<int> QueueScheduledAsync(DateTime nowUtc, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<(long Id, DateTime MainshockTime, DateTime? LastIssue)>(new CommandDefinition("""
            select s.id, s.mainshock_time, (select max(f.created_at) from forecast f where f.sequence_id = s.id) as last_issue
            from sequence s
            where s.status = 'active' and not exists (select 1 from refit_queue q where q.sequence_id = s.id)
            """, cancellationToken: ct));
        var queued = 0;
        foreach (var (id, mainshockTime, lastIssue) in rows)
        {
            if (lastIssue is null || !RefitSchedule.IsDue(mainshockTime, lastIssue.Value, nowUtc)) continue;
            await conn.ExecuteAsync(new CommandDefinition("""
                insert into refit_queue (sequence_id, reason) values (@id, 'schedule') on conflict do nothing
                """, new { id }, cancellationToken: ct));
            queued++;
        }
        return queued;
    }
}

/// <summary>How often a forecast is refreshed when no event arrives.</summary>
/// <remarks>Project choice, following the rate of change of an Omori-type decay (fast early, slow later): hourly
/// for the first 3 days after the mainshock, every 6 hours to day 30, then daily. An accepted event, revision
/// or retraction refits at once whatever the schedule.</remarks>
public static class RefitSchedule
{
    public static TimeSpan Interval(double daysSinceMainshock) => daysSinceMainshock switch
    {
        < 3 => TimeSpan.FromHours(1),
        < 30 => TimeSpan.FromHours(6),
        _ => TimeSpan.FromDays(1),
    };

    public static bool IsDue(DateTime mainshockUtc, DateTime lastForecastUtc, DateTime nowUtc) =>
        nowUtc - lastForecastUtc >= Interval((nowUtc - mainshockUtc).TotalDays);
}
