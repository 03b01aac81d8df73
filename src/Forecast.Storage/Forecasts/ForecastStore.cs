using Dapper;
using Npgsql;

namespace Forecast.Storage.Forecasts;

/// <summary>The numbered, immutable forecasts of each sequence and their states.</summary>
/// <remarks>States: a forecast is a draft when computed; releasing one makes every earlier released one of the
/// sequence superseded; any forecast not yet withdrawn can be withdrawn. The database refuses any other change
/// (trigger <c>forecast_immutable</c>).</remarks>
public sealed class ForecastStore(NpgsqlDataSource db)
{
    /// <summary>A forecast to store; the number is given by the store.</summary>
    public sealed record NewForecast(
        long SequenceId, string Reason, bool Exercise, DateTime IssueTime, string EngineVersion, string ParameterSet,
        long MainshockPk, double MainshockMagnitude, double Mc, double FitStartDays, int EventCount,
        DateTime? LastEventTime, string CatalogHash, string Result, string Options, string AdvisoryText, long? CreatedBy);

    /// <summary>Stores the forecast under the sequence's next number (taken under the sequence's row lock).</summary>
    public async Task<ForecastRecord> InsertAsync(NewForecast f, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        var number = await conn.ExecuteScalarAsync<int>(new CommandDefinition("""
            update sequence set next_forecast_number = next_forecast_number + 1, last_error = null, last_error_at = null
            where id = @SequenceId returning next_forecast_number - 1
            """, f, tx, cancellationToken: ct));
        var row = await conn.QuerySingleAsync<ForecastRecord>(new CommandDefinition($"""
            insert into forecast (sequence_id, number, reason, exercise, issue_time, engine_version, parameter_set,
                                  mainshock_pk, mainshock_magnitude, mc, fit_start_days, event_count, last_event_time,
                                  catalog_hash, result, options, advisory_text, created_by)
            values (@SequenceId, @number, @Reason, @Exercise, @IssueTime, @EngineVersion, @ParameterSet, @MainshockPk,
                    @MainshockMagnitude, @Mc, @FitStartDays, @EventCount, @LastEventTime, @CatalogHash,
                    @Result::jsonb, @Options::jsonb, @AdvisoryText, @CreatedBy)
            returning {Columns}
            """, new
        {
            f.SequenceId, number, f.Reason, f.Exercise, f.IssueTime, f.EngineVersion, f.ParameterSet, f.MainshockPk,
            f.MainshockMagnitude, f.Mc, f.FitStartDays, f.EventCount, f.LastEventTime, f.CatalogHash, f.Result,
            f.Options, f.AdvisoryText, f.CreatedBy,
        }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return row;
    }

    public async Task<ForecastRecord?> FindAsync(long sequenceId, int number, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<ForecastRecord>(new CommandDefinition(
            $"select {Columns} from forecast where sequence_id = @sequenceId and number = @number",
            new { sequenceId, number }, cancellationToken: ct));
    }

    /// <summary>The highest-numbered forecast, in any state, or only released ones.</summary>
    public Task<ForecastRecord?> LatestAsync(long sequenceId, bool releasedOnly, CancellationToken ct) =>
        LatestAsync<ForecastRecord>(Columns, sequenceId, releasedOnly, ct);

    /// <summary>Which forecast is the latest (in any state, or only released) and in what state, without reading
    /// its result: what a cached rendering of it is keyed by.</summary>
    public Task<ForecastVersion?> LatestVersionAsync(long sequenceId, bool releasedOnly, CancellationToken ct) =>
        LatestAsync<ForecastVersion>(VersionColumns, sequenceId, releasedOnly, ct);

    /// <param name="columns">One of this class's own column lists (constants), never caller text.</param>
    async Task<T?> LatestAsync<T>(string columns, long sequenceId, bool releasedOnly, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<T>(new CommandDefinition($"""
            select {columns} from forecast
            where sequence_id = @sequenceId and (not @releasedOnly or state = 'released')
            order by number desc limit 1
            """, new { sequenceId, releasedOnly }, cancellationToken: ct));
    }

    /// <summary>The state of forecast <paramref name="number"/>, without its result.</summary>
    public async Task<ForecastVersion?> VersionAsync(long sequenceId, int number, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<ForecastVersion>(new CommandDefinition(
            $"select {VersionColumns} from forecast where sequence_id = @sequenceId and number = @number",
            new { sequenceId, number }, cancellationToken: ct));
    }

    /// <summary>The released forecast of each of <paramref name="sequenceIds"/> that has one, without results.</summary>
    public async Task<IReadOnlyList<ForecastVersion>> LatestReleasedVersionsAsync(long[] sequenceIds, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<ForecastVersion>(new CommandDefinition($"""
            select distinct on (sequence_id) {VersionColumns} from forecast
            where sequence_id = any(@sequenceIds) and state = 'released'
            order by sequence_id, number desc
            """, new { sequenceIds }, cancellationToken: ct));
        return rows.AsList();
    }

    /// <summary>Forecasts newest first, optionally only those in <paramref name="states"/>.</summary>
    public async Task<IReadOnlyList<ForecastRecord>> ListAsync(long sequenceId, string[]? states, int limit, CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var rows = await conn.QueryAsync<ForecastRecord>(new CommandDefinition($"""
            select {Columns} from forecast
            where sequence_id = @sequenceId and (@states::text[] is null or state = any(@states))
            order by number desc limit @limit
            """, new { sequenceId, states, limit }, cancellationToken: ct));
        return rows.AsList();
    }

    /// <summary>Releases a draft (optionally with the analyst's edited advisory); earlier released forecasts of
    /// the sequence become superseded.</summary>
    public async Task<TransitionOutcome> ReleaseAsync(long sequenceId, int number, string? editedAdvisory, long? keyId,
        CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        await using var tx = await conn.BeginTransactionAsync(ct);
        // The sequence row lock orders concurrent releases of one sequence.
        await conn.ExecuteAsync(new CommandDefinition("select 1 from sequence where id = @sequenceId for update",
            new { sequenceId }, tx, cancellationToken: ct));
        var state = await conn.QuerySingleOrDefaultAsync<string>(new CommandDefinition(
            "select state from forecast where sequence_id = @sequenceId and number = @number",
            new { sequenceId, number }, tx, cancellationToken: ct));
        if (state is null) return TransitionOutcome.NotFound;
        if (state != "draft") return TransitionOutcome.WrongState;
        var newer = await conn.ExecuteScalarAsync<bool>(new CommandDefinition("""
            select exists (select 1 from forecast where sequence_id = @sequenceId and state = 'released' and number > @number)
            """, new { sequenceId, number }, tx, cancellationToken: ct));
        if (newer) return TransitionOutcome.NewerReleased;
        await conn.ExecuteAsync(new CommandDefinition("""
            update forecast set state = 'superseded' where sequence_id = @sequenceId and state = 'released';
            update forecast set state = 'released', released_at = now(), released_by = @keyId,
                                released_advisory_text = @editedAdvisory
            where sequence_id = @sequenceId and number = @number;
            """, new { sequenceId, number, keyId, editedAdvisory }, tx, cancellationToken: ct));
        await tx.CommitAsync(ct);
        return TransitionOutcome.Done;
    }

    /// <summary>Withdraws a forecast in any state but withdrawn.</summary>
    public async Task<TransitionOutcome> WithdrawAsync(long sequenceId, int number, string? reason, long? keyId,
        CancellationToken ct)
    {
        await using var conn = await db.OpenConnectionAsync(ct);
        var n = await conn.ExecuteAsync(new CommandDefinition("""
            update forecast set state = 'withdrawn', withdrawn_at = now(), withdrawn_by = @keyId, withdraw_reason = @reason
            where sequence_id = @sequenceId and number = @number and state <> 'withdrawn'
            """, new { sequenceId, number, reason, keyId }, cancellationToken: ct));
        if (n == 1) return TransitionOutcome.Done;
        return await FindAsync(sequenceId, number, ct) is null ? TransitionOutcome.NotFound : TransitionOutcome.WrongState;
    }

    const string VersionColumns = "sequence_id, number, state, created_at, released_at, withdrawn_at";

    const string Columns = """
        id, sequence_id, number, state, reason, exercise, issue_time, created_at, engine_version, parameter_set,
        mainshock_pk, mainshock_magnitude, mc, fit_start_days, event_count, last_event_time, catalog_hash,
        result::text as result, options::text as options, advisory_text, created_by, released_at, released_by,
        released_advisory_text, withdrawn_at, withdrawn_by, withdraw_reason
        """;
}

/// <summary>A forecast's identity and state without its content. The content of a forecast never changes; its state
/// (and with it the release or withdrawal time and the released advisory) does, so (sequence, number, state)
/// identifies a representation.</summary>
public sealed class ForecastVersion
{
    public long SequenceId { get; init; }
    public int Number { get; init; }
    public string State { get; init; } = "";
    public DateTime CreatedAt { get; init; }
    public DateTime? ReleasedAt { get; init; }
    public DateTime? WithdrawnAt { get; init; }

    /// <summary>As <see cref="ForecastRecord.LastModified"/>.</summary>
    public DateTime LastModified => new[] { CreatedAt, ReleasedAt ?? DateTime.MinValue, WithdrawnAt ?? DateTime.MinValue }.Max();

    public static ForecastVersion Of(ForecastRecord f) => new()
    {
        SequenceId = f.SequenceId, Number = f.Number, State = f.State, CreatedAt = f.CreatedAt, ReleasedAt = f.ReleasedAt,
        WithdrawnAt = f.WithdrawnAt,
    };
}
