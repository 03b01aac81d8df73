using System.Text;
using Dapper;
using Npgsql;
using NpgsqlTypes;

namespace Forecast.Storage.Events;

/// <summary>The event catalog: batch upserts with revision history, lookups and the paged query.</summary>
public sealed class EventStore(NpgsqlDataSource db)
{
    const int MaxAttempts = 3;

    /// <summary>Stores a validated batch, all or nothing, in one transaction.</summary>
    /// <remarks>
    /// The batch goes through binary COPY into a temporary staging table, then one set-based upsert
    /// writes the changed events and their revisions. Identical re-posts change nothing. Rows are upserted in
    /// (source, id) order so concurrent overlapping batches take row locks in the same order; a deadlock or
    /// serialization failure that still happens is retried as a whole.
    /// </remarks>
    public async Task<UpsertSummary> UpsertAsync(IReadOnlyList<EventInput> events, long? keyId, CancellationToken ct)
    {
        if (events.Count == 0) return new UpsertSummary(0, 0, 0, []);
        for (var attempt = 1; ; attempt++)
        {
            try
            {
                return await UpsertOnceAsync(events, keyId, ct);
            }
            catch (PostgresException e) when (attempt < MaxAttempts && e.SqlState is
                PostgresErrorCodes.DeadlockDetected or PostgresErrorCodes.SerializationFailure)
            {
                await Task.Delay(TimeSpan.FromMilliseconds(20 * attempt), ct);
            }
        }
    }

    async Task<UpsertSummary> UpsertOnceAsync(IReadOnlyList<EventInput> events, long? keyId, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            create temp table event_stage (
                ord integer, source text collate "C", event_id text collate "C", origin_time timestamptz, latitude double precision,
                longitude double precision, depth_km double precision, magnitude double precision,
                magnitude_type text, status text
            ) on commit drop
            """, transaction: tx, cancellationToken: ct));

        await using (var copy = await conn.BeginBinaryImportAsync(
            "copy event_stage (ord, source, event_id, origin_time, latitude, longitude, depth_km, magnitude, " +
            "magnitude_type, status) from stdin (format binary)", ct))
        {
            // Synchronous writes: the importer buffers rows and only flushes when its buffer fills, so a million
            // awaited calls would cost more than the few blocking flushes they save.
            for (var i = 0; i < events.Count; i++)
            {
                var e = events[i];
                copy.StartRow();
                copy.Write(i, NpgsqlDbType.Integer);
                copy.Write(e.Source, NpgsqlDbType.Text);
                copy.Write(e.EventId, NpgsqlDbType.Text);
                copy.Write(e.OriginTime, NpgsqlDbType.TimestampTz);
                copy.Write(e.Latitude, NpgsqlDbType.Double);
                copy.Write(e.Longitude, NpgsqlDbType.Double);
                copy.Write(e.DepthKm, NpgsqlDbType.Double);
                copy.Write(e.Magnitude, NpgsqlDbType.Double);
                copy.Write(e.MagnitudeType, NpgsqlDbType.Text);
                copy.Write(e.Status, NpgsqlDbType.Text);
            }
            await copy.CompleteAsync(ct);
        }

        // The SET list reads the locked current row (e.*) against the new values (excluded.*): that is
        // where "what changed" is known for certain, even when another batch revised the event a moment ago.
        const string upsert = """
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
            select s.ord, w.version, w.id as pk
            from event_stage s
            join written w on w.source = s.source and w.event_id = s.event_id
            """;
        var rows = (await conn.QueryAsync<(int Ord, int Version, long Pk)>(
            new CommandDefinition(upsert, new { keyId }, tx, cancellationToken: ct))).AsList();
        // Events the upsert left alone keep their current version; ask only when there are any.
        var unchanged = rows.Count == events.Count ? [] : (await conn.QueryAsync<(int Ord, int Version)>(
            new CommandDefinition("""
                select s.ord, e.version from event_stage s
                join event e on e.source = s.source and e.event_id = s.event_id
                where not exists (select 1 from unnest(@writtenOrds) w(ord) where w.ord = s.ord)
                """, new { writtenOrds = rows.Select(r => r.Ord).ToArray() }, tx, cancellationToken: ct))).AsList();

        // In the same transaction: queue refits of the active sequences the written events touch, and big events
        // as candidate mainshocks (issue 4), so nothing acknowledged is ever missed by the forecasts.
        var writtenPks = rows.Select(r => r.Pk).ToArray();
        if (writtenPks.Length > 0)
        {
            await conn.ExecuteAsync(new CommandDefinition("select queue_sequence_work(@writtenPks)",
                new { writtenPks }, tx, cancellationToken: ct));
        }
        await tx.CommitAsync(ct);

        var items = new EventUpsertItem[events.Count];
        int created = 0, revised = 0;
        foreach (var (ord, version) in unchanged)
            items[ord] = new EventUpsertItem(events[ord].Source, events[ord].EventId, EventOutcome.Unchanged, version);
        foreach (var (ord, version, _) in rows)
        {
            var outcome = version == 1 ? EventOutcome.Created : EventOutcome.Revised;
            if (outcome == EventOutcome.Created) created++;
            if (outcome == EventOutcome.Revised) revised++;
            items[ord] = new EventUpsertItem(events[ord].Source, events[ord].EventId, outcome, version);
        }
        return new UpsertSummary(created, revised, events.Count - created - revised, items);
    }

    public async Task<EventRow?> FindAsync(string source, string eventId, CancellationToken ct)
    {
        const string sql = $"""
            select {Columns} from event where source = @source and event_id = @eventId
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<EventRow>(
            new CommandDefinition(sql, new { source, eventId }, cancellationToken: ct));
    }

    public async Task<IReadOnlyList<EventRevisionRow>> RevisionsAsync(long eventPk, CancellationToken ct)
    {
        const string sql = """
            select version, recorded_at, key_id, changed, origin_time, latitude, longitude, depth_km, magnitude,
                   magnitude_type, status
            from event_revision where event_pk = @eventPk order by version
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<EventRevisionRow>(
            new CommandDefinition(sql, new { eventPk }, cancellationToken: ct));
        return rows.AsList();
    }

    /// <summary>Events matching <paramref name="q"/> in (origin time, id) order, at most <c>q.Limit</c>.</summary>
    public async Task<IReadOnlyList<EventRow>> QueryAsync(EventQuery q, CancellationToken ct)
    {
        var where = new List<string>();
        var p = new DynamicParameters();
        void Add(string clause, string name, object value)
        {
            where.Add(clause);
            p.Add(name, value);
        }

        if (!q.IncludeDeleted) where.Add("status <> 'deleted'");
        if (q.FromUtc is { } from) Add("origin_time >= @fromUtc", "fromUtc", from);
        if (q.ToUtc is { } to) Add("origin_time < @toUtc", "toUtc", to);
        if (q.MinMagnitude is { } minM) Add("magnitude >= @minMag", "minMag", minM);
        if (q.MaxMagnitude is { } maxM) Add("magnitude <= @maxMag", "maxMag", maxM);
        if (q.MinLatitude is { } minLat) Add("latitude >= @minLat", "minLat", minLat);
        if (q.MaxLatitude is { } maxLat) Add("latitude <= @maxLat", "maxLat", maxLat);
        if (q.MinLongitude is { } minLon && q.MaxLongitude is { } maxLon)
        {
            // A box whose west edge is east of its east edge crosses the antimeridian.
            where.Add(minLon <= maxLon
                ? "longitude between @minLon and @maxLon"
                : "(longitude >= @minLon or longitude <= @maxLon)");
            p.Add("minLon", minLon);
            p.Add("maxLon", maxLon);
        }
        if (q.Circle is { } c)
        {
            // Haversine on a 6371 km sphere, the same formula as the statistics use.
            where.Add("""
                6371.0 * 2 * asin(least(1.0, sqrt(power(sin(radians(latitude - @cLat) / 2), 2)
                    + cos(radians(@cLat)) * cos(radians(latitude)) * power(sin(radians(longitude - @cLon) / 2), 2))))
                    <= @cRadius
                """);
            p.Add("cLat", c.Latitude);
            p.Add("cLon", c.Longitude);
            p.Add("cRadius", c.RadiusKm);
        }
        if (q.After is { } after)
        {
            where.Add("(origin_time, id) > (@afterTime, @afterId)");
            p.Add("afterTime", after.OriginTime);
            p.Add("afterId", after.Id);
        }
        p.Add("limit", q.Limit);

        var sql = new StringBuilder($"select {Columns} from event");
        if (where.Count > 0) sql.Append(" where ").AppendJoin(" and ", where);
        sql.Append(" order by origin_time, id limit @limit");

        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<EventRow>(new CommandDefinition(sql.ToString(), p, cancellationToken: ct));
        return rows.AsList();
    }

    const string Columns = """
        id, source, event_id, origin_time, latitude, longitude, depth_km, magnitude, magnitude_type, status,
        version, created_at, updated_at
        """;
}
