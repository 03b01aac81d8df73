using Forecast.Storage.Events;
using Forecast.Storage.Keys;
using Forecast.Tests.Shared;
using Npgsql;

namespace Forecast.Storage.Tests;

public sealed class EventStoreTests : IClassFixture<TestDatabase>, IDisposable
{
    readonly NpgsqlDataSource _db;
    readonly EventStore _events;

    public EventStoreTests(TestDatabase database)
    {
        StorageDefaults.Apply();
        _db = NpgsqlDataSource.Create(database.ConnectionString);
        _events = new EventStore(_db);
    }

    public void Dispose() => _db.Dispose();

    static EventInput Event(string id, double lon = 0, double magnitude = 3, string status = "automatic") =>
        new("st", id, new DateTime(2026, 4, 1, 0, 0, 0, DateTimeKind.Utc).AddMinutes(id.GetHashCode() & 0xff),
            10, lon, 5, magnitude, "ML", status);

    async Task<long> CountAsync(string like)
    {
        await using var cmd = _db.CreateCommand("select count(*) from event where event_id like @like");
        cmd.Parameters.AddWithValue("like", like);
        return (long)(await cmd.ExecuteScalarAsync())!;
    }

    [Fact]
    public async Task ABatchDisposedWithoutCommitStoresNothing()
    {
        await using (var batch = await _events.BeginBatchAsync(default))
        {
            for (var i = 0; i < 500; i++) batch.Add(Event($"rolled-{i}"));
            Assert.Equal(500, batch.Count);
        }
        Assert.Equal(0, await CountAsync("rolled-%"));
    }

    [Fact]
    public async Task ABatchNamingAnEventTwiceReportsEveryRepeatAndStoresNothing()
    {
        await using var batch = await _events.BeginBatchAsync(default);
        foreach (var id in new[] { "twice-a", "twice-b", "twice-a", "twice-c", "twice-b" }) batch.Add(Event(id));
        var outcome = await batch.CommitAsync(null, 1_000, default);
        Assert.Null(outcome.Summary);
        Assert.Equal([new DuplicateItem(2, 0), new DuplicateItem(4, 1)], outcome.Duplicates);
        Assert.Equal(0, await CountAsync("twice-%"));
    }

    [Fact]
    public async Task ABatchLargerThanTheListingLimitReportsCountsOnly()
    {
        await using var batch = await _events.BeginBatchAsync(default);
        for (var i = 0; i < 30; i++) batch.Add(Event($"counted-{i}"));
        var summary = (await batch.CommitAsync(null, listItemsUpTo: 10, default)).Summary!;
        Assert.Equal((30, 0, 0), (summary.Created, summary.Revised, summary.Unchanged));
        Assert.Empty(summary.Items);
        Assert.Equal(30, await CountAsync("counted-%"));
    }

    [Fact]
    public async Task UpsertReportsCreatedRevisedAndUnchangedInSubmissionOrder()
    {
        await _events.UpsertAsync([Event("u-1"), Event("u-2")], null, default);
        var summary = await _events.UpsertAsync([Event("u-2", magnitude: 3.5), Event("u-3"), Event("u-1")], null, default);
        Assert.Equal((1, 1, 1), (summary.Created, summary.Revised, summary.Unchanged));
        Assert.Equal([EventOutcome.Revised, EventOutcome.Created, EventOutcome.Unchanged], summary.Items.Select(i => i.Outcome));
        Assert.Equal([2, 1, 1], summary.Items.Select(i => i.Version));
    }

    [Fact]
    public async Task EveryVersionIsKeptWithTheFieldsThatChanged()
    {
        await _events.UpsertAsync([Event("h-1")], null, default);
        await _events.UpsertAsync([Event("h-1", magnitude: 4)], null, default);
        await _events.UpsertAsync([Event("h-1", magnitude: 4, status: "deleted")], null, default);
        var row = await _events.FindAsync("st", "h-1", default);
        var revisions = await _events.RevisionsAsync(row!.Id, default);
        Assert.Equal([1, 2, 3], revisions.Select(r => r.Version));
        Assert.Equal([[], ["magnitude"], ["status"]], revisions.Select(r => r.Changed));
        Assert.Equal(3.0, revisions[0].Magnitude);
    }

    [Fact]
    public async Task ABoxWhoseWestEdgeIsEastOfItsEastEdgeCrossesTheAntimeridian()
    {
        await _events.UpsertAsync([Event("am-w", lon: 179.5), Event("am-e", lon: -179.5), Event("am-0", lon: 0)], null, default);
        var rows = await _events.QueryAsync(new EventQuery { MinLongitude = 179, MaxLongitude = -179, Limit = 100 }, default);
        Assert.Equal(["am-e", "am-w"], rows.Select(r => r.EventId).Where(i => i.StartsWith("am-", StringComparison.Ordinal)).Order());
    }

    [Fact]
    public async Task TheBootstrapAdminKeyIsRegisteredOnlyWhileNoAdminExists()
    {
        var keys = new ApiKeyStore(_db);
        var first = await keys.BootstrapAdminAsync("bootstrap-key-for-storage-tests-000000001", default);
        var second = await keys.BootstrapAdminAsync("bootstrap-key-for-storage-tests-000000002", default);
        Assert.NotNull(first);
        Assert.Null(second);
        Assert.NotNull(await keys.FindActiveAsync("bootstrap-key-for-storage-tests-000000001", default));
        Assert.Null(await keys.FindActiveAsync("bootstrap-key-for-storage-tests-000000002", default));
    }
}
