using Dapper;
using Forecast.Core.Zone;
using Npgsql;

namespace Forecast.Storage.Sequences;

/// <summary>Sequences: declaration, automatic opening, zone and membership, takeover by a larger event.</summary>
/// <remarks>
/// The zone's centre and radius are stored on the sequence (the event upsert reads them to queue refits in its own
/// transaction) and recomputed from the mainshock as it is now by <see cref="ReconcileAsync"/>, which the refit
/// worker calls before every fit: a revised mainshock magnitude or location, or a takeover, moves the zone.
/// </remarks>
public sealed class SequenceStore(NpgsqlDataSource db, SequenceSettings settings)
{
    // Any constant; it only has to be the same for every instance. Serialises automatic opening, so two workers
    // never open two sequences for one burst.
    const long OpeningLockKey = 0x53657175_656e6365; // "Sequence"
    const int MaxTakeoversPerReconcile = 10;

    public SequenceSettings Settings => settings;

    /// <summary>Writes the settings the event upsert reads (the trigger magnitude) to the database.</summary>
    /// <remarks>The setting is database-wide: with several instances, the last one to start wins.</remarks>
    public async Task ApplySettingsAsync(CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition(
            "update sequence_setting set trigger_magnitude = @TriggerMagnitude",
            new { settings.TriggerMagnitude }, cancellationToken: ct));
    }

    /// <summary>Radius in km of a zone: the override, else <c>max(floor, multiple * RLD(M))</c>.</summary>
    public static double RadiusKm(double magnitude, double multiple, double floorKm, double? overrideKm) =>
        overrideKm ?? AftershockZone.RadiusKm(magnitude, multiple, floorKm);

    /// <summary>Declares the event (source, id) a mainshock and queues its first fit.</summary>
    public async Task<DeclareResult> DeclareAsync(
        string source, string eventId, SequenceChoices choices, long? keyId, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var e = await conn.QuerySingleOrDefaultAsync<(long Id, string Status)?>(new CommandDefinition(
            "select id, status from event where source = @source and event_id = @eventId",
            new { source, eventId }, tx, cancellationToken: ct));
        if (e is null) return new DeclareResult(DeclareOutcome.NoSuchEvent, null);
        if (e.Value.Status == "deleted") return new DeclareResult(DeclareOutcome.EventRetracted, null);

        var existing = await ExistingFor(conn, tx, e.Value.Id, ct);
        if (existing is not null) return new DeclareResult(DeclareOutcome.Duplicate, existing);
        try
        {
            var id = await InsertAsync(conn, tx, e.Value.Id, choices, automatic: false, keyId, ct);
            await tx.CommitAsync(ct);
            return new DeclareResult(DeclareOutcome.Created, id);
        }
        catch (PostgresException x) when (x.SqlState == PostgresErrorCodes.UniqueViolation)
        {
            // Declared by someone else a moment ago.
            await tx.RollbackAsync(ct);
            await using var again = await db.OpenConnectionAsync(ct);
            return new DeclareResult(DeclareOutcome.Duplicate, await ExistingFor(again, null, e.Value.Id, ct));
        }
    }

    static Task<long?> ExistingFor(NpgsqlConnection conn, NpgsqlTransaction? tx, long eventPk, CancellationToken ct) =>
        conn.QuerySingleOrDefaultAsync<long?>(new CommandDefinition(
            "select id from sequence where mainshock_pk = @eventPk", new { eventPk }, tx, cancellationToken: ct));

    async Task<long> InsertAsync(NpgsqlConnection conn, NpgsqlTransaction tx, long eventPk, SequenceChoices c,
        bool automatic, long? keyId, CancellationToken ct)
    {
        var main = await conn.QuerySingleAsync<(double Latitude, double Longitude, double Magnitude, DateTime OriginTime)>(
            new CommandDefinition("select latitude, longitude, magnitude, origin_time from event where id = @eventPk",
                new { eventPk }, tx, cancellationToken: ct));
        var multiple = c.ZoneMultiple ?? settings.ZoneMultiple;
        var floorKm = c.ZoneFloorKm ?? settings.ZoneFloorKm;
        var radius = RadiusKm(main.Magnitude, multiple, floorKm, c.ZoneRadiusKm);
        const string sql = """
            insert into sequence (mainshock_pk, name, automatic, exercise, zone_multiple, zone_floor_km,
                                  zone_override_km, zone_radius_km, centre_latitude, centre_longitude, mainshock_time,
                                  foreshock_days, parameter_set, mc, fit_start_days, background_rate_per_day,
                                  background_magnitude, created_by)
            values (@eventPk, @Name, @automatic, @exercise, @multiple, @floorKm, @ZoneRadiusKm, @radius, @Latitude,
                    @Longitude, @OriginTime, @foreshockDays, @parameterSet, @Mc, @FitStartDays,
                    @BackgroundRatePerDay, @BackgroundMagnitude, @keyId)
            returning id
            """;
        var id = await conn.ExecuteScalarAsync<long>(new CommandDefinition(sql, new
        {
            eventPk, c.Name, automatic, exercise = c.Exercise ?? false, multiple, floorKm, c.ZoneRadiusKm, radius,
            main.Latitude, main.Longitude, main.OriginTime, foreshockDays = c.ForeshockDays ?? settings.ForeshockDays,
            parameterSet = c.ParameterSet ?? settings.ParameterSet, c.Mc, c.FitStartDays, c.BackgroundRatePerDay,
            c.BackgroundMagnitude, keyId,
        }, tx, cancellationToken: ct));
        await RefitQueue.EnqueueAsync(conn, tx, id, automatic ? "opened" : "declared", ct);
        return id;
    }

    public async Task<SequenceRow?> FindAsync(long id, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<SequenceRow>(new CommandDefinition(
            Select + " where s.id = @id", new { id }, cancellationToken: ct));
    }

    /// <summary>Sequences, newest first; <paramref name="status"/> null lists all.</summary>
    public async Task<IReadOnlyList<SequenceRow>> ListAsync(string? status, int limit, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<SequenceRow>(new CommandDefinition(
            Select + " where (@status::text is null or s.status = @status) order by s.id desc limit @limit",
            new { status, limit }, cancellationToken: ct));
        return rows.AsList();
    }

    /// <summary>Applies the analyst's changes (null fields stay), recomputes the zone and queues a refit.</summary>
    /// <returns>False when no active sequence has that id.</returns>
    public async Task<bool> UpdateAsync(long id, SequenceChoices c, bool clearRadiusOverride, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        const string sql = """
            update sequence set
                name = coalesce(@Name, name),
                zone_multiple = coalesce(@ZoneMultiple, zone_multiple),
                zone_floor_km = coalesce(@ZoneFloorKm, zone_floor_km),
                zone_override_km = case when @clearRadiusOverride then null else coalesce(@ZoneRadiusKm, zone_override_km) end,
                foreshock_days = coalesce(@ForeshockDays, foreshock_days),
                parameter_set = coalesce(@ParameterSet, parameter_set),
                mc = coalesce(@Mc, mc),
                fit_start_days = coalesce(@FitStartDays, fit_start_days),
                exercise = coalesce(@Exercise, exercise),
                background_rate_per_day = coalesce(@BackgroundRatePerDay, background_rate_per_day),
                background_magnitude = coalesce(@BackgroundMagnitude, background_magnitude),
                updated_at = now()
            where id = @id and status = 'active'
            """;
        var n = await conn.ExecuteAsync(new CommandDefinition(sql, new
        {
            id, c.Name, c.ZoneMultiple, c.ZoneFloorKm, c.ZoneRadiusKm, clearRadiusOverride, c.ForeshockDays,
            c.ParameterSet, c.Mc, c.FitStartDays, c.Exercise, c.BackgroundRatePerDay, c.BackgroundMagnitude,
        }, tx, cancellationToken: ct));
        if (n == 0) return false;
        await ReconcileAsync(conn, tx, id, ct);
        await RefitQueue.EnqueueAsync(conn, tx, id, "edited", ct);
        await tx.CommitAsync(ct);
        return true;
    }

    /// <summary>Closes an active sequence: no more refits. Returns false when there is no such active sequence.</summary>
    public async Task<bool> CloseAsync(long id, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var n = await conn.ExecuteAsync(new CommandDefinition("""
            update sequence set status = 'closed', closed_at = now(), updated_at = now()
            where id = @id and status = 'active'
            """, new { id }, tx, cancellationToken: ct));
        await conn.ExecuteAsync(new CommandDefinition(
            "delete from refit_queue where sequence_id = @id and claimed_until is null", new { id }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return n == 1;
    }

    public async Task<IReadOnlyList<MainshockChangeRow>> MainshockChangesAsync(long id, CancellationToken ct)
    {
        const string sql = """
            select c.changed_at, f.source as from_source, f.event_id as from_event_id, c.from_magnitude,
                   t.source as to_source, t.event_id as to_event_id, c.to_magnitude
            from sequence_mainshock_change c
            join event f on f.id = c.from_event_pk
            join event t on t.id = c.to_event_pk
            where c.sequence_id = @id order by c.changed_at
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<MainshockChangeRow>(new CommandDefinition(sql, new { id }, cancellationToken: ct));
        return rows.AsList();
    }

    /// <summary>Brings the sequence up to date with its catalog: a larger event after the mainshock inside the zone
    /// takes over (recorded, with the time), and the zone follows the mainshock's current magnitude and place.</summary>
    /// <exception cref="SequenceException">The mainshock has been retracted.</exception>
    public async Task ReconcileAsync(long id, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        await ReconcileAsync(conn, tx, id, ct);
        await tx.CommitAsync(ct);
    }

    async Task ReconcileAsync(NpgsqlConnection conn, NpgsqlTransaction tx, long id, CancellationToken ct)
    {
        for (var round = 0; round <= MaxTakeoversPerReconcile; round++)
        {
            var s = await conn.QuerySingleAsync<SequenceRow>(new CommandDefinition(
                Select + " where s.id = @id for update of s", new { id }, tx, cancellationToken: ct));
            var main = await conn.QuerySingleAsync<(double Latitude, double Longitude, double Magnitude, DateTime OriginTime, string Status)>(
                new CommandDefinition("select latitude, longitude, magnitude, origin_time, status from event where id = @pk",
                    new { pk = s.MainshockPk }, tx, cancellationToken: ct));
            if (main.Status == "deleted")
                throw new SequenceException($"The mainshock {s.MainshockSource}/{s.MainshockEventId} has been retracted; " +
                                            "declare another event or close the sequence.");
            var radius = RadiusKm(main.Magnitude, s.ZoneMultiple, s.ZoneFloorKm, s.ZoneOverrideKm);
            await conn.ExecuteAsync(new CommandDefinition("""
                update sequence set zone_radius_km = @radius, centre_latitude = @Latitude, centre_longitude = @Longitude,
                                    mainshock_time = @OriginTime
                where id = @id and (zone_radius_km, centre_latitude, centre_longitude, mainshock_time)
                      is distinct from (@radius, @Latitude, @Longitude, @OriginTime)
                """, new { id, radius, main.Latitude, main.Longitude, main.OriginTime }, tx, cancellationToken: ct));

            // The largest later event in the zone that is bigger than the mainshock and not another's mainshock.
            var larger = (await InZone(conn, tx, main.Latitude, main.Longitude, radius,
                    "e.origin_time > @after and e.magnitude > @magnitude and not exists " +
                    "(select 1 from sequence o where o.mainshock_pk = e.id)",
                    new { after = main.OriginTime, magnitude = main.Magnitude }, ct))
                .OrderByDescending(e => e.Magnitude).ThenBy(e => e.OriginTime).FirstOrDefault();
            if (larger is null) return;

            await conn.ExecuteAsync(new CommandDefinition("""
                insert into sequence_mainshock_change (sequence_id, from_event_pk, to_event_pk, from_magnitude, to_magnitude)
                values (@id, @from, @to, @fromMagnitude, @toMagnitude);
                update sequence set mainshock_pk = @to, updated_at = now() where id = @id;
                """, new { id, from = s.MainshockPk, to = larger.Pk, fromMagnitude = main.Magnitude, toMagnitude = larger.Magnitude },
                tx, cancellationToken: ct));
        }
    }

    /// <summary>The mainshock, foreshocks and aftershocks as the catalog stands (retracted events left out),
    /// aftershocks up to <paramref name="untilUtc"/> when given.</summary>
    public async Task<Membership> MembersAsync(SequenceRow s, DateTime? untilUtc, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var from = s.MainshockTime.AddDays(-s.ForeshockDays);
        var events = await InZone(conn, null, s.CentreLatitude, s.CentreLongitude, s.ZoneRadiusKm,
            "e.origin_time >= @from and (@until::timestamptz is null or e.origin_time <= @until or e.id = @mainPk)",
            new { from, until = untilUtc, mainPk = s.MainshockPk }, ct);
        var main = events.FirstOrDefault(e => e.Pk == s.MainshockPk)
            ?? throw new SequenceException($"The mainshock {s.MainshockSource}/{s.MainshockEventId} is retracted or outside its zone.");
        var fore = events.Where(e => e.Pk != main.Pk && e.OriginTime < main.OriginTime).ToList();
        var after = events.Where(e => e.Pk != main.Pk && e.OriginTime >= main.OriginTime).ToList();
        return new Membership(main, fore, after);
    }

    /// <summary>Non-retracted events in the zone from <paramref name="fromUtc"/> to before
    /// <paramref name="toUtc"/>: the catalog history a background rate is estimated from.</summary>
    public async Task<IReadOnlyList<MemberEvent>> HistoryAsync(SequenceRow s, DateTime fromUtc, DateTime toUtc,
        CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await InZone(conn, null, s.CentreLatitude, s.CentreLongitude, s.ZoneRadiusKm,
            "e.origin_time >= @fromUtc and e.origin_time < @toUtc", new { fromUtc, toUtc }, ct);
    }

    /// <summary>Non-retracted events within <paramref name="radiusKm"/> of the centre that match
    /// <paramref name="where"/>, in time order. SQL narrows by a bounding box; <see cref="AftershockZone.Contains"/>
    /// decides, so the zone test is the statistics' own.</summary>
    static async Task<List<MemberEvent>> InZone(NpgsqlConnection conn, NpgsqlTransaction? tx, double lat, double lon,
        double radiusKm, string where, object args, CancellationToken ct)
    {
        // One degree of latitude is 111.19 km on the 6371 km sphere; longitude degrees shrink with cos(latitude).
        var dLat = radiusKm / 111.19 + 0.01;
        var cosLat = Math.Cos(Math.Min(89.0, Math.Abs(lat) + dLat) * Math.PI / 180);
        var dLon = cosLat < 1e-3 ? 360 : radiusKm / (111.19 * cosLat) + 0.01;
        var p = new DynamicParameters(args);
        p.Add("minLat", lat - dLat);
        p.Add("maxLat", lat + dLat);
        string lonClause;
        if (dLon >= 180) lonClause = "true";
        else
        {
            var west = Core.Catalog.GreatCircle.NormaliseLongitude(lon - dLon);
            var east = Core.Catalog.GreatCircle.NormaliseLongitude(lon + dLon);
            p.Add("west", west);
            p.Add("east", east);
            lonClause = west <= east ? "e.longitude between @west and @east" : "(e.longitude >= @west or e.longitude <= @east)";
        }
        var sql = $"""
            select e.id as pk, e.source, e.event_id, e.origin_time, e.latitude, e.longitude, e.depth_km, e.magnitude,
                   e.magnitude_type, e.status, e.version
            from event e
            where e.status <> 'deleted' and e.latitude between @minLat and @maxLat and {lonClause} and ({where})
            order by e.origin_time, e.id
            """;
        var rows = await conn.QueryAsync<(long Pk, string Source, string EventId, DateTime OriginTime, double Latitude,
            double Longitude, double DepthKm, double Magnitude, string MagnitudeType, string Status, int Version)>(
            new CommandDefinition(sql, p, tx, cancellationToken: ct));
        var result = new List<MemberEvent>();
        foreach (var r in rows)
        {
            var d = Core.Catalog.GreatCircle.DistanceKm(lat, lon, r.Latitude, r.Longitude);
            if (d <= radiusKm)
                result.Add(new MemberEvent(r.Pk, r.Source, r.EventId, r.OriginTime, r.Latitude, r.Longitude, r.DepthKm,
                    r.Magnitude, r.MagnitudeType, r.Status, r.Version, d));
        }
        return result;
    }

    /// <summary>Opens sequences for queued candidate events that lie outside every active zone.</summary>
    /// <returns>The ids of the sequences opened.</returns>
    /// <remarks>One transaction under an advisory lock, biggest candidate first: of a burst of large shocks the
    /// largest opens the sequence and the others fall inside its zone (its refit, queued by the upsert, handles
    /// them, a takeover included).</remarks>
    public async Task<IReadOnlyList<long>> OpenCandidatesAsync(CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("select pg_advisory_xact_lock(@k)", new { k = OpeningLockKey },
            tx, cancellationToken: ct));
        var candidates = await conn.QueryAsync<(long Pk, double Latitude, double Longitude)>(new CommandDefinition("""
            with taken as (delete from sequence_candidate returning event_pk)
            select e.id, e.latitude, e.longitude from taken t join event e on e.id = t.event_pk
            where e.status <> 'deleted' and e.magnitude >= @TriggerMagnitude
              and not exists (select 1 from sequence s where s.mainshock_pk = e.id)
            order by e.magnitude desc, e.origin_time, e.id
            """, new { settings.TriggerMagnitude }, tx, cancellationToken: ct));
        var opened = new List<long>();
        foreach (var c in candidates)
        {
            var zones = await conn.QueryAsync<(double Latitude, double Longitude, double RadiusKm)>(new CommandDefinition(
                "select centre_latitude, centre_longitude, zone_radius_km from sequence where status = 'active'",
                transaction: tx, cancellationToken: ct));
            if (zones.Any(z => AftershockZone.Contains(z.Latitude, z.Longitude, z.RadiusKm, c.Latitude, c.Longitude)))
                continue;
            opened.Add(await InsertAsync(conn, tx, c.Pk, new SequenceChoices(), automatic: true, keyId: null, ct));
        }
        await tx.CommitAsync(ct);
        return opened;
    }

    /// <summary>Stores a failed fit's message on the sequence (shown to analysts); null clears it.</summary>
    public async Task RecordErrorAsync(long id, string? error, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await conn.ExecuteAsync(new CommandDefinition("""
            update sequence set last_error = @error, last_error_at = case when @error::text is null then null else now() end
            where id = @id and last_error is distinct from @error
            """, new { id, error }, cancellationToken: ct));
    }

    const string Select = """
        select s.id, s.mainshock_pk, m.source as mainshock_source, m.event_id as mainshock_event_id,
               m.magnitude as mainshock_magnitude, m.status as mainshock_status, s.name, s.status, s.automatic,
               s.exercise, s.zone_multiple, s.zone_floor_km, s.zone_override_km, s.zone_radius_km, s.centre_latitude,
               s.centre_longitude, s.mainshock_time, s.foreshock_days, s.parameter_set, s.mc, s.fit_start_days,
               s.background_rate_per_day, s.background_magnitude, s.last_error, s.last_error_at, s.created_by,
               s.created_at, s.updated_at, s.closed_at
        from sequence s join event m on m.id = s.mainshock_pk
        """;
}

/// <summary>A sequence cannot be fitted as it stands (for example its mainshock was retracted).</summary>
public sealed class SequenceException(string message) : Exception(message);
