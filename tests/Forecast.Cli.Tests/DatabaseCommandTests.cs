using Forecast.Tests.Shared;
using Npgsql;

namespace Forecast.Cli.Tests;

public class DatabaseCommandTests(TestDatabase db) : IClassFixture<TestDatabase>
{
    async Task<T> ScalarAsync<T>(string sql)
    {
        await using var conn = new NpgsqlConnection(db.ConnectionString);
        await conn.OpenAsync();
        await using var cmd = new NpgsqlCommand(sql, conn);
        return (T)(await cmd.ExecuteScalarAsync())!;
    }

    [Fact]
    public void MigrateOnAnUpToDateDatabaseSaysSo()
    {
        var run = CliRunner.Forecast("migrate", "--connection", db.ConnectionString);
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("up to date", run.Stdout);
    }

    [Fact]
    public async Task TheDemoLoadsOnceWithAReleasedForecastAndADraftMarkedAsAnExercise()
    {
        var first = CliRunner.Forecast("demo", "--connection", db.ConnectionString);
        Assert.Equal(0, first.ExitCode);
        var second = CliRunner.Forecast("demo", "--connection", db.ConnectionString);
        Assert.Equal(0, second.ExitCode);
        Assert.Contains("0 new, 0 revised", second.Stdout);

        Assert.Equal(1L, await ScalarAsync<long>("select count(*) from sequence"));
        Assert.True(await ScalarAsync<bool>("select exercise from sequence"));
        Assert.Equal(1L, await ScalarAsync<long>("select count(*) from forecast where state = 'released'"));
        Assert.True(await ScalarAsync<long>("select count(*) from forecast where state = 'draft'") >= 1);
        // The invented sequence runs up to the time of the first load (two days after its mainshock).
        var lastEvent = await ScalarAsync<DateTime>("select max(origin_time) from event where source = 'demo'");
        Assert.InRange((DateTime.UtcNow - lastEvent.ToUniversalTime()).TotalHours, 0, 3);
        // Demo keys: one per role and only the newest set active.
        Assert.Equal(3L, await ScalarAsync<long>("select count(*) from api_key where name like 'demo %' and revoked_at is null"));
    }

    [Fact]
    public void KeysCreatePrintsAKeyOnce()
    {
        var run = CliRunner.Forecast("keys", "create", "--role", "analyst", "--name", "duty desk", "--connection", db.ConnectionString);
        Assert.Equal(0, run.ExitCode);
        Assert.StartsWith("fk_", run.Stdout.Trim());
        var list = CliRunner.Forecast("keys", "list", "--connection", db.ConnectionString);
        Assert.Contains("duty desk", list.Stdout);
        Assert.DoesNotContain(run.Stdout.Trim(), list.Stdout);
    }
}
