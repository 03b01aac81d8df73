using System.Text;
using Dapper;
using Npgsql;

namespace Forecast.Storage.Events;

/// <summary>The event catalog: batch upserts with revision history, lookups and the paged query.</summary>
public sealed class EventStore(NpgsqlDataSource db)
{
    /// <summary>Opens an all-or-nothing batch that events stream into (see <see cref="EventBatch"/>).</summary>
    public Task<EventBatch> BeginBatchAsync(CancellationToken ct) => EventBatch.BeginAsync(db, ct);

    /// <summary>Stores a validated batch held in memory, all or nothing, in one transaction, with the outcome of
    /// every event. A batch naming an event twice is a caller's mistake here (the API refuses it first).</summary>
    public async Task<UpsertSummary> UpsertAsync(IReadOnlyList<EventInput> events, long? keyId, CancellationToken ct)
    {
        await using var batch = await BeginBatchAsync(ct);
        foreach (var e in events) batch.Add(e);
        var outcome = await batch.CommitAsync(keyId, int.MaxValue, ct);
        return outcome.Summary ?? throw new ArgumentException(
            $"The batch names event {outcome.Duplicates[0].Item} and {outcome.Duplicates[0].FirstItem} alike.",
            nameof(events));
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
