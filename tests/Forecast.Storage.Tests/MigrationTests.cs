using Forecast.Storage;
using Forecast.Tests.Shared;
using Npgsql;

namespace Forecast.Storage.Tests;

public class MigrationTests(TestDatabase db) : IClassFixture<TestDatabase>
{
    [Fact]
    public void ApplyingTwiceAppliesNothingTheSecondTime()
    {
        var again = Migrator.Apply(db.ConnectionString);
        Assert.Empty(again);
    }

    [Fact]
    public async Task RevisionHistoryRefusesUpdates()
    {
        await using var conn = new NpgsqlConnection(db.ConnectionString);
        await conn.OpenAsync();
        await using var cmd = new NpgsqlCommand("""
            insert into event (source, event_id, origin_time, latitude, longitude, depth_km, magnitude, magnitude_type, status)
            values ('zz', 'm1', now(), 1, 2, 3, 4, 'ML', 'automatic') returning id
            """, conn);
        var pk = (long)(await cmd.ExecuteScalarAsync())!;
        await using var rev = new NpgsqlCommand("""
            insert into event_revision (event_pk, version, changed, origin_time, latitude, longitude, depth_km, magnitude, magnitude_type, status)
            values (@pk, 1, '{}', now(), 1, 2, 3, 4, 'ML', 'automatic')
            """, conn);
        rev.Parameters.AddWithValue("pk", pk);
        await rev.ExecuteNonQueryAsync();
        await using var update = new NpgsqlCommand("update event_revision set magnitude = 5", conn);
        var e = await Assert.ThrowsAsync<PostgresException>(() => update.ExecuteNonQueryAsync());
        Assert.Contains("append-only", e.MessageText);
    }

    [Fact]
    public async Task KeysCanBeRevokedButNeverDeletedSoEveryRevisionNamesAKeyThatExists()
    {
        await using var conn = new NpgsqlConnection(db.ConnectionString);
        await conn.OpenAsync();
        await using var insert = new NpgsqlCommand("""
            insert into api_key (name, role, prefix, secret_hash) values ('gone', 'feeder', 'p', '\x00') returning id
            """, conn);
        var id = (long)(await insert.ExecuteScalarAsync())!;
        await using var delete = new NpgsqlCommand("delete from api_key where id = @id", conn);
        delete.Parameters.AddWithValue("id", id);
        var e = await Assert.ThrowsAsync<PostgresException>(() => delete.ExecuteNonQueryAsync());
        Assert.Equal(PostgresErrorCodes.RestrictViolation, e.SqlState);
        await using var count = new NpgsqlCommand("select count(*) from api_key where id = @id", conn);
        count.Parameters.AddWithValue("id", id);
        Assert.Equal(1L, (long)(await count.ExecuteScalarAsync())!);
    }
}
