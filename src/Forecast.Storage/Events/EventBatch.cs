using Dapper;
using Npgsql;
using NpgsqlTypes;

namespace Forecast.Storage.Events;

/// <summary>Two events of one batch with the same (source, id), by their 0-based positions.</summary>
public sealed record DuplicateItem(int Item, int FirstItem);

/// <summary>How a batch ended: stored (<see cref="Summary"/>), or refused because it names an event twice.</summary>
public sealed record BatchOutcome(UpsertSummary? Summary, IReadOnlyList<DuplicateItem> Duplicates);

/// <summary>One all-or-nothing batch of events being written: rows stream into a staging table of an open
/// transaction, so a caller can feed a document of any size while holding one event at a time. Nothing is
/// visible to anyone else until <see cref="CommitAsync"/>; disposing an uncommitted batch rolls it back.</summary>
/// <remarks>
/// Rows go through binary COPY into a temporary staging table; <see cref="CommitAsync"/> then refuses a batch
/// naming an event twice (its outcome would depend on row order) and runs one set-based upsert that writes the
/// changed events and their revisions. Identical re-posts change nothing. Rows are upserted in (source, id) order
/// so concurrent overlapping batches take row locks in the same order; a deadlock or serialization failure that
/// still happens is retried from a savepoint, with the staged rows kept.
/// </remarks>
public sealed class EventBatch : IAsyncDisposable
{
    const int MaxAttempts = 3;
    const int MaxDuplicatesReported = 200;

    readonly NpgsqlConnection _conn;
    readonly NpgsqlTransaction _tx;
    NpgsqlBinaryImporter? _copy;
    bool _done, _disposed;

    EventBatch(NpgsqlConnection conn, NpgsqlTransaction tx, NpgsqlBinaryImporter copy)
    {
        _conn = conn;
        _tx = tx;
        _copy = copy;
    }

    /// <summary>Events added so far.</summary>
    public int Count { get; private set; }

    internal static async Task<EventBatch> BeginAsync(NpgsqlDataSource db, CancellationToken ct)
    {
        var conn = await db.OpenConnectionAsync(ct);
        try
        {
            var tx = await conn.BeginTransactionAsync(ct);
            // Sorts and hashes of a 100,000-event batch fit in 64 MB; the server default (4 MB) spills them to disk.
            await conn.ExecuteAsync(new CommandDefinition("""
                set local work_mem = '64MB';
                create temp table event_stage (
                    ord integer, source text collate "C", event_id text collate "C", origin_time timestamptz,
                    latitude double precision, longitude double precision, depth_km double precision,
                    magnitude double precision, magnitude_type text, status text
                ) on commit drop;
                create temp table event_written (ord integer, pk bigint, version integer) on commit drop;
                """, transaction: tx, cancellationToken: ct));
            var copy = await conn.BeginBinaryImportAsync(
                "copy event_stage (ord, source, event_id, origin_time, latitude, longitude, depth_km, magnitude, " +
                "magnitude_type, status) from stdin (format binary)", ct);
            return new EventBatch(conn, tx, copy);
        }
        catch
        {
            await conn.DisposeAsync();
            throw;
        }
    }

    /// <summary>Stages one validated event. Synchronous on purpose: the importer buffers rows and only flushes
    /// when its buffer fills, so a hundred thousand awaited calls would cost more than the few blocking flushes
    /// they save.</summary>
    public void Add(EventInput e)
    {
        var copy = _copy ?? throw new InvalidOperationException("The batch is already being committed.");
        copy.StartRow();
        copy.Write(Count, NpgsqlDbType.Integer);
        copy.Write(e.Source, NpgsqlDbType.Text);
        copy.Write(e.EventId, NpgsqlDbType.Text);
        copy.Write(e.OriginTime, NpgsqlDbType.TimestampTz);
        copy.Write(e.Latitude, NpgsqlDbType.Double);
        copy.Write(e.Longitude, NpgsqlDbType.Double);
        copy.Write(e.DepthKm, NpgsqlDbType.Double);
        copy.Write(e.Magnitude, NpgsqlDbType.Double);
        copy.Write(e.MagnitudeType, NpgsqlDbType.Text);
        copy.Write(e.Status, NpgsqlDbType.Text);
        Count++;
    }

    /// <summary>Stores the batch, or refuses it (nothing stored) when it names an event twice.</summary>
    /// <param name="keyId">The API key recorded in the revisions.</param>
    /// <param name="listItemsUpTo">Per-event outcomes are returned when the batch has at most this many events;
    /// larger batches get their counts only, so the answer does not grow with the batch.</param>
    public async Task<BatchOutcome> CommitAsync(long? keyId, int listItemsUpTo, CancellationToken ct)
    {
        if (_copy is { } copy)
        {
            await copy.CompleteAsync(ct);
            await copy.DisposeAsync();
            _copy = null;
        }
        if (Count == 0)
        {
            await DisposeAsync();
            return new BatchOutcome(new UpsertSummary(0, 0, 0, []), []);
        }

        // A hash aggregate answers "any duplicate?" cheaply; only a refused batch pays for the positions.
        var anyDuplicate = await _conn.ExecuteScalarAsync<bool>(new CommandDefinition("""
            select exists (select 1 from event_stage group by source, event_id having count(*) > 1)
            """, transaction: _tx, cancellationToken: ct));
        if (anyDuplicate)
        {
            var duplicates = (await _conn.QueryAsync<DuplicateItem>(new CommandDefinition("""
                select ord as item, first as firstitem from (
                    select ord, min(ord) over (partition by source, event_id) as first from event_stage) d
                where ord <> first order by ord limit @max
                """, new { max = MaxDuplicatesReported }, _tx, cancellationToken: ct))).AsList();
            await DisposeAsync();
            return new BatchOutcome(null, duplicates);
        }

        for (var attempt = 1; ; attempt++)
        {
            await _tx.SaveAsync("upsert", ct);
            try
            {
                var sql = Count <= listItemsUpTo ? Upsert + WrittenWithPositions : Upsert + WrittenCountsOnly;
                await _conn.ExecuteAsync(new CommandDefinition(sql, new { keyId }, _tx, cancellationToken: ct));
                break;
            }
            catch (PostgresException e) when (attempt < MaxAttempts && e.SqlState is
                PostgresErrorCodes.DeadlockDetected or PostgresErrorCodes.SerializationFailure)
            {
                await _tx.RollbackAsync("upsert", ct);
                await Task.Delay(TimeSpan.FromMilliseconds(20 * attempt), ct);
            }
        }

        // In the same transaction: queue refits of the active sequences the written events touch, and big events
        // as candidate mainshocks, so nothing acknowledged is ever missed by the forecasts.
        var (created, revised) = await _conn.QuerySingleAsync<(int, int)>(new CommandDefinition("""
            select (count(*) filter (where version = 1))::int, (count(*) filter (where version > 1))::int
            from event_written
            """, transaction: _tx, cancellationToken: ct));
        if (created + revised > 0)
        {
            await _conn.ExecuteAsync(new CommandDefinition(
                "select queue_sequence_work(array(select pk from event_written))", transaction: _tx,
                cancellationToken: ct));
        }

        IReadOnlyList<EventUpsertItem> items = [];
        if (Count <= listItemsUpTo)
        {
            // Events the upsert left alone keep their current version.
            var rows = await _conn.QueryAsync<(string Source, string EventId, int Version, bool Written)>(
                new CommandDefinition("""
                    select s.source, s.event_id, coalesce(w.version, e.version), w.ord is not null
                    from event_stage s
                    left join event_written w on w.ord = s.ord
                    left join event e on w.ord is null and e.source = s.source and e.event_id = s.event_id
                    order by s.ord
                    """, transaction: _tx, cancellationToken: ct));
            items = rows.Select(r => new EventUpsertItem(r.Source, r.EventId,
                !r.Written ? EventOutcome.Unchanged : r.Version == 1 ? EventOutcome.Created : EventOutcome.Revised,
                r.Version)).ToList();
        }

        await _tx.CommitAsync(ct);
        _done = true;
        await DisposeAsync();
        return new BatchOutcome(new UpsertSummary(created, revised, Count - created - revised, items), []);
    }

    // The SET list reads the locked current row (e.*) against the new values (excluded.*): that is where
    // "what changed" is known for certain, even when another batch revised the event a moment ago.
    const string Upsert = """
        with written as (
            insert into event as e (source, event_id, origin_time, latitude, longitude, depth_km, magnitude,
                                    magnitude_type, status)
            select source, event_id, origin_time, latitude, longitude, depth_km, magnitude, magnitude_type, status
            from event_stage
            order by source, event_id
            on conflict (source, event_id) do update set
                origin_time = excluded.origin_time, latitude = excluded.latitude,
                longitude = excluded.longitude, depth_km = excluded.depth_km, magnitude = excluded.magnitude,
                magnitude_type = excluded.magnitude_type, status = excluded.status,
                version = e.version + 1, updated_at = now(),
                last_changed = array_remove(array[
                    case when e.origin_time is distinct from excluded.origin_time then 'time' end,
                    case when e.latitude is distinct from excluded.latitude then 'latitude' end,
                    case when e.longitude is distinct from excluded.longitude then 'longitude' end,
                    case when e.depth_km is distinct from excluded.depth_km then 'depthKm' end,
                    case when e.magnitude is distinct from excluded.magnitude then 'magnitude' end,
                    case when e.magnitude_type is distinct from excluded.magnitude_type then 'magnitudeType' end,
                    case when e.status is distinct from excluded.status then 'status' end], null)
            where (e.origin_time, e.latitude, e.longitude, e.depth_km, e.magnitude, e.magnitude_type, e.status)
                  is distinct from
                  (excluded.origin_time, excluded.latitude, excluded.longitude, excluded.depth_km,
                   excluded.magnitude, excluded.magnitude_type, excluded.status)
            returning e.id, e.source, e.event_id, e.version, e.last_changed, e.origin_time, e.latitude,
                      e.longitude, e.depth_km, e.magnitude, e.magnitude_type, e.status
        ),
        history as (
            insert into event_revision (event_pk, version, key_id, changed, origin_time, latitude, longitude,
                                        depth_km, magnitude, magnitude_type, status)
            select id, version, @keyId, last_changed, origin_time, latitude, longitude, depth_km, magnitude,
                   magnitude_type, status
            from written
        )

        """;

    // Positions are needed only to list per-event outcomes; a large batch skips the join back to the stage.
    const string WrittenWithPositions = """
        insert into event_written (ord, pk, version)
        select s.ord, w.id, w.version
        from event_stage s
        join written w on w.source = s.source and w.event_id = s.event_id
        """;

    const string WrittenCountsOnly = """
        insert into event_written (ord, pk, version)
        select null, id, version from written
        """;

    /// <summary>Rolls back unless committed, and returns the connection to the pool.</summary>
    public async ValueTask DisposeAsync()
    {
        if (_disposed) return;
        _disposed = true;
        if (_copy is { } copy)
        {
            _copy = null;
            try { await copy.DisposeAsync(); } catch (NpgsqlException) { } catch (InvalidOperationException) { }
        }
        if (!_done)
        {
            _done = true;
            try { await _tx.RollbackAsync(); } catch (NpgsqlException) { } catch (InvalidOperationException) { }
        }
        await _tx.DisposeAsync();
        await _conn.DisposeAsync();
    }
}
