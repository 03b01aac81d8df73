using Dapper;
using Forecast.Storage;
using Forecast.Storage.Events;
using Forecast.Storage.Sequences;
using Forecast.Tests.Shared;
using Npgsql;

namespace Forecast.Api.Tests.Sequences;

/// <summary>The refit queue on its own (no API, so no worker competes): SKIP LOCKED claims, leases, coalescing,
/// and the queueing the event upsert does in its own transaction.</summary>
public sealed class RefitQueueTests : IAsyncLifetime
{
    readonly TestDatabase _db = new();
    NpgsqlDataSource _source = null!;
    EventStore _events = null!;
    SequenceStore _sequences = null!;
    RefitQueue _queue = null!;
    static readonly TimeSpan Lease = TimeSpan.FromMinutes(5);
    static readonly DateTime T0 = DateTime.UtcNow.Date.AddDays(-2);

    public async Task InitializeAsync()
    {
        StorageDefaults.Apply();
        await _db.InitializeAsync();
        _source = NpgsqlDataSource.Create(_db.ConnectionString);
        _events = new EventStore(_source);
        _sequences = new SequenceStore(_source, new SequenceSettings());
        _queue = new RefitQueue(_source);
    }

    public async Task DisposeAsync()
    {
        await _source.DisposeAsync();
        await _db.DisposeAsync();
    }

    async Task<long> SequenceAtAsync(string id, double lat, double lon = 10)
    {
        await _events.UpsertAsync([new EventInput("q", id, T0, lat, lon, 10, 4.5, "Mw", "reviewed")], null, default);
        var r = await _sequences.DeclareAsync("q", id, new SequenceChoices(), null, default);
        return r.SequenceId!.Value;
    }

    async Task<long> RowsAsync()
    {
        await using var conn = await _source.OpenConnectionAsync();
        return await conn.ExecuteScalarAsync<long>("select count(*) from refit_queue");
    }

    [Fact]
    public async Task ARowLockedByOneClaimerIsSkippedByAnotherAndThenHeldByItsLease()
    {
        var id = await SequenceAtAsync("lock-1", 0);

        // Claimer A runs the claim inside a transaction it keeps open: the row stays locked.
        await using var a = await _source.OpenConnectionAsync();
        await using var tx = await a.BeginTransactionAsync();
        var claimA = await a.QuerySingleOrDefaultAsync<RefitClaim>(RefitQueue.ClaimSql, new { worker = "A", lease = Lease }, tx);
        Assert.Equal(id, claimA!.SequenceId);

        // Claimer B does not wait for the lock (SKIP LOCKED): it finds nothing at once.
        Assert.Null(await _queue.ClaimAsync("B", Lease, default));
        await tx.CommitAsync();
        // Committed, the row is leased to A: B still gets nothing.
        Assert.Null(await _queue.ClaimAsync("B", Lease, default));

        Assert.True(await _queue.CompleteAsync(claimA, default));
        Assert.Equal(0, await RowsAsync());
    }

    [Fact]
    public async Task ConcurrentClaimersTakeEverySequenceExactlyOnce()
    {
        var ids = new List<long>();
        for (var i = 0; i < 12; i++) ids.Add(await SequenceAtAsync($"many-{i}", 10 + i));

        var claims = new System.Collections.Concurrent.ConcurrentBag<RefitClaim>();
        await Task.WhenAll(Enumerable.Range(0, 6).Select(w => Task.Run(async () =>
        {
            while (await _queue.ClaimAsync($"w{w}", Lease, default) is { } c) claims.Add(c);
        })));

        Assert.Equal(ids.Order(), claims.Select(c => c.SequenceId).Order());
    }

    [Fact]
    public async Task EventsDuringAFitCoalesceIntoOneMoreRound()
    {
        var id = await SequenceAtAsync("coal-1", -10);
        await _queue.EnqueueAsync(id, "event", default);
        await _queue.EnqueueAsync(id, "event", default);
        Assert.Equal(1, await RowsAsync());

        var claim = (await _queue.ClaimAsync("A", Lease, default))!;
        // An event arrives while A fits: the row is kept for another round, not duplicated.
        await _queue.EnqueueAsync(id, "event", default);
        Assert.Equal(1, await RowsAsync());
        Assert.Null(await _queue.ClaimAsync("B", Lease, default));
        Assert.False(await _queue.CompleteAsync(claim, default));

        var again = (await _queue.ClaimAsync("B", Lease, default))!;
        Assert.Equal(id, again.SequenceId);
        Assert.True(await _queue.CompleteAsync(again, default));
        Assert.Equal(0, await RowsAsync());
    }

    [Fact]
    public async Task TheEventUpsertQueuesARefitForASequenceWhoseZoneItTouchesAndNoOther()
    {
        var inside = await SequenceAtAsync("zone-a", 30);
        await SequenceAtAsync("zone-b", 35);
        while (await _queue.ClaimAsync("drain", Lease, default) is { } c) await _queue.CompleteAsync(c, default);
        Assert.Equal(0, await RowsAsync());

        // 0.05 degrees north of zone-a's mainshock: 5.6 km, inside its 10 km zone and 550 km from zone-b.
        await _events.UpsertAsync([new EventInput("q", "near-a", T0.AddHours(1), 30.05, 10, 10, 3.0, "ML", "reviewed")], null, default);
        var claim = await _queue.ClaimAsync("A", Lease, default);
        Assert.Equal(inside, claim!.SequenceId);
        Assert.Null(await _queue.ClaimAsync("A", Lease, default));
        await _queue.CompleteAsync(claim, default);

        // A revision that moves the event out of zone-a touches it again (its previous position was inside).
        await _events.UpsertAsync([new EventInput("q", "near-a", T0.AddHours(1), 31, 10, 10, 3.0, "ML", "reviewed")], null, default);
        Assert.Equal(inside, (await _queue.ClaimAsync("A", Lease, default))!.SequenceId);
    }

    [Theory]
    // Cadence (project choice, RefitSchedule): hourly to day 3, every 6 h to day 30, then daily.
    [InlineData(1.0, 0.9, false)]
    [InlineData(1.0, 1.0, true)]
    [InlineData(10.0, 5.9, false)]
    [InlineData(10.0, 6.0, true)]
    [InlineData(40.0, 23.0, false)]
    [InlineData(40.0, 24.0, true)]
    public void TheScheduleRefitsHourlyThenEverySixHoursThenDaily(double daysSinceMainshock, double hoursSinceForecast, bool due)
    {
        var now = new DateTime(2026, 6, 1, 0, 0, 0, DateTimeKind.Utc);
        Assert.Equal(due, RefitSchedule.IsDue(now.AddDays(-daysSinceMainshock), now.AddHours(-hoursSinceForecast), now));
    }
}
