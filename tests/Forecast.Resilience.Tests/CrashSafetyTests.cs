using System.Collections.Concurrent;
using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using Dapper;
using Forecast.Tests.Shared;
using Npgsql;
using Xunit.Abstractions;

namespace Forecast.Resilience.Tests;

/// <summary>The API killed with SIGKILL while batches of events stream in, then started again.</summary>
public class CrashSafetyTests(ITestOutputHelper output) : IAsyncLifetime
{
    const string Source = "crash";
    const int BatchSize = 2_000;

    readonly TestDatabase _db = new();

    public Task InitializeAsync() => _db.InitializeAsync();

    public Task DisposeAsync() => _db.DisposeAsync();

    [Fact]
    public async Task EveryAcknowledgedBatchSurvivesAKillNoBatchIsPartlyStoredAndQueuedRefitsRunAfterRestart()
    {
        long sequenceId;
        var acked = new ConcurrentBag<int>();
        var attempted = new ConcurrentBag<int>();
        var killedInTransaction = false;

        // First life: the refit worker is off, so the refits the batches queue are still queued at the kill.
        await using (var api = await ApiProcess.StartAsync(_db.ConnectionString,
                         new Dictionary<string, string> { ["RefitWorker__Enabled"] = "false" }))
        {
            using var admin = api.Client();
            sequenceId = await Scenario.DeclareAsync(admin, Source);

            using var stop = new CancellationTokenSource();
            var next = -1;
            async Task Stream()
            {
                using var client = api.Client();
                while (!stop.IsCancellationRequested)
                {
                    var batch = Interlocked.Increment(ref next);
                    attempted.Add(batch);
                    try
                    {
                        var r = await client.PostAsJsonAsync("/v1/events",
                            Scenario.Aftershocks(Source, $"b{batch}", BatchSize, seed: batch), stop.Token);
                        if (r.IsSuccessStatusCode) acked.Add(batch);
                    }
                    catch (Exception e) when (e is HttpRequestException or OperationCanceledException)
                    {
                        return; // the server is gone
                    }
                }
            }
            var streams = new[] { Task.Run(Stream), Task.Run(Stream) };

            await api.WaitForAsync("three acknowledged batches", TimeSpan.FromSeconds(60), () => Task.FromResult(acked.Count >= 3));
            // Kill while an ingest transaction is open (it has written rows), so a batch is cut off mid-store.
            await using (var probe = new NpgsqlConnection(_db.ConnectionString))
            {
                await probe.OpenAsync();
                var clock = Stopwatch.StartNew();
                while (clock.Elapsed < TimeSpan.FromSeconds(30))
                {
                    if (await probe.ExecuteScalarAsync<bool>("""
                            select exists (select 1 from pg_stat_activity
                                           where datname = current_database() and pid <> pg_backend_pid()
                                             and backend_xid is not null)
                            """))
                    {
                        killedInTransaction = true;
                        break;
                    }
                    await Task.Delay(2);
                }
            }
            await api.KillAsync();
            await stop.CancelAsync();
            await Task.WhenAll(streams);
            output.WriteLine($"killed with {acked.Count} of {attempted.Count} batches acknowledged; " +
                             $"an ingest transaction was open: {killedInTransaction}");
        }

        Assert.True(killedInTransaction, "no ingest transaction was seen open in 30 s of streaming");
        await using var conn = new NpgsqlConnection(_db.ConnectionString);
        await conn.OpenAsync();
        var stored = (await conn.QueryAsync<(string Batch, int Count)>("""
            select split_part(event_id, '-', 1) as batch, count(*)::int as count
            from event where source = @Source and event_id <> 'main' group by 1
            """, new { Source })).ToDictionary(r => r.Batch, r => r.Count);
        foreach (var batch in attempted)
        {
            var count = stored.GetValueOrDefault($"b{batch}");
            Assert.True(count is 0 or BatchSize, $"batch {batch} is partly stored: {count} of {BatchSize} events");
            if (acked.Contains(batch)) Assert.Equal(BatchSize, count);
        }
        Assert.All(stored.Keys, b => Assert.Contains(int.Parse(b[1..], System.Globalization.CultureInfo.InvariantCulture), attempted));
        Assert.Equal(1, await conn.ExecuteScalarAsync<int>(
            "select count(*)::int from refit_queue where sequence_id = @sequenceId", new { sequenceId }));

        // Second life, worker on: the queued refit runs and sees every stored event (the mainshock and aftershocks).
        var members = 1 + stored.Values.Sum();
        await using (var api = await ApiProcess.StartAsync(_db.ConnectionString))
        {
            using var client = api.Client();
            var first = acked.Min();
            Assert.Equal(HttpStatusCode.OK, (await client.GetAsync($"/v1/events/{Source}/b{first}-0")).StatusCode);
            await api.WaitForAsync($"a forecast of all {members} stored events", TimeSpan.FromSeconds(90), async () =>
                await Scenario.LatestAsync(client, sequenceId) is { } f
                && f.GetProperty("input").GetProperty("eventCount").GetInt32() == members);
            await api.WaitForAsync("the refit queue to empty", TimeSpan.FromSeconds(30), async () =>
                await conn.ExecuteScalarAsync<int>("select count(*)::int from refit_queue") == 0);
        }
    }
}
