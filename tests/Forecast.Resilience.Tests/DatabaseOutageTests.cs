using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using Dapper;
using Npgsql;
using Xunit.Abstractions;

namespace Forecast.Resilience.Tests;

/// <summary>PostgreSQL stopped under a running API (its own cluster), then started again; the API is not restarted.</summary>
public class DatabaseOutageTests(ITestOutputHelper output)
{
    const string Source = "outage";

    [Fact]
    public async Task WhileTheDatabaseIsAwayRequestsAnswer503AndReadinessFailsThenEverythingRecoversWithoutARestart()
    {
        var clock = Stopwatch.StartNew();
        void Step(string what) => output.WriteLine($"{clock.Elapsed.TotalSeconds,6:0.0} s  {what}");
        await using var cluster = await PostgresCluster.CreateAsync("forecast");
        Step("cluster started");
        await using var api = await ApiProcess.StartAsync(cluster.ConnectionString("forecast"),
            new Dictionary<string, string> { ["RefitWorker__MaxBackoff"] = "00:00:01" });
        using var admin = api.Client();
        using var anonymous = api.Client(key: null);

        Step("API started");
        var sequenceId = await Scenario.DeclareAsync(admin, Source);
        // A key first used during the outage: its lookup needs the database, and must answer 503, not 401.
        var created = await admin.PostAsJsonAsync("/v1/keys", new { name = "outage feeder", role = "feeder" });
        created.EnsureSuccessStatusCode();
        var feederKey = await created.Content.ReadFromJsonAsync<JsonElement>();
        using var feeder = api.Client(feederKey.GetProperty("key").GetString());
        await api.WaitForAsync("the first forecast", TimeSpan.FromSeconds(60), async () =>
            await Scenario.LatestAsync(admin, sequenceId) is not null);

        // Leave a refit pending across the outage, claimed mid-fit: the test holds the sequence row, so the worker
        // that claims the refit of the next batch blocks in the fit (at its "select ... for update" of the
        // sequence). Event ingest only takes key-share locks on that row and is not held up.
        var hold = new NpgsqlConnection(cluster.ConnectionString("forecast"));
        await hold.OpenAsync();
        var holdTx = await hold.BeginTransactionAsync();
        await hold.ExecuteAsync("select 1 from sequence where id = @sequenceId for no key update", new { sequenceId }, holdTx);
        var batch = Scenario.Aftershocks(Source, "before", 300, seed: 1);
        Assert.Equal(HttpStatusCode.OK, (await admin.PostAsJsonAsync("/v1/events", batch)).StatusCode);
        await using (var probe = new NpgsqlConnection(cluster.ConnectionString("forecast")))
        {
            await probe.OpenAsync();
            await api.WaitForAsync("the worker to claim the refit and wait on the sequence row", TimeSpan.FromSeconds(30), async () =>
                await probe.ExecuteScalarAsync<bool>("""
                    select exists (select 1 from refit_queue where sequence_id = @sequenceId and claimed_by is not null)
                       and exists (select 1 from pg_stat_activity where datname = current_database() and wait_event_type = 'Lock')
                    """, new { sequenceId }));
        }

        Step("refit claimed and held mid-fit");
        cluster.Stop();
        await DisposeQuietly(hold);
        Step("PostgreSQL stopped");

        // Writes and reads: 503, Retry-After, problem details.
        await AssertUnavailable(await admin.PostAsJsonAsync("/v1/events", Scenario.Aftershocks(Source, "during", 10, seed: 2)));
        await AssertUnavailable(await feeder.PostAsJsonAsync("/v1/events", Scenario.Aftershocks(Source, "during", 10, seed: 2)));
        // Every other kind of write: keys, sequences, forecasts.
        await AssertUnavailable(await admin.PostAsJsonAsync("/v1/keys", new { name = "during outage", role = "analyst" }));
        await AssertUnavailable(await admin.PostAsync($"/v1/keys/{feederKey.GetProperty("id").GetInt64()}/revoke", null));
        await AssertUnavailable(await admin.PatchAsJsonAsync($"/v1/sequences/{sequenceId}", new { name = "renamed during outage" }));
        await AssertUnavailable(await admin.PostAsJsonAsync($"/v1/sequences/{sequenceId}/forecasts", new { }));
        await AssertUnavailable(await admin.PostAsync($"/v1/sequences/{sequenceId}/forecasts/1/release", null));
        await AssertUnavailable(await admin.PostAsync($"/v1/sequences/{sequenceId}/close", null));
        // Polled reads may give their last answer for Polling:ReadReuse + Polling:RefreshWithin (0.2 s + 1 s by
        // default) after it was read, as documented; past that they too need the database.
        await Task.Delay(TimeSpan.FromSeconds(1.5));
        await AssertUnavailable(await admin.GetAsync($"/v1/sequences/{sequenceId}/forecasts/latest"));
        await AssertUnavailable(await admin.GetAsync($"/v1/events/{Source}/main"));
        await AssertUnavailable(await anonymous.GetAsync("/v1/public/feed.geojson"));
        await AssertUnavailable(await anonymous.GetAsync($"/v1/public/sequences/{sequenceId}/forecast"));
        Assert.Equal(HttpStatusCode.ServiceUnavailable, (await anonymous.GetAsync("/health/ready")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await anonymous.GetAsync("/health/live")).StatusCode);
        // The refit worker meets the outage, logs it with its backoff, and the host keeps running.
        await api.WaitForAsync("the refit worker to log two failed rounds", TimeSpan.FromSeconds(30), () =>
            Task.FromResult(api.Log.Contains("Refit worker round 2 failed", StringComparison.Ordinal)));
        Assert.False(api.HasExited, "the API exited during the outage:\n" + api.Tail(40));
        Assert.Equal(HttpStatusCode.OK, (await anonymous.GetAsync("/health/live")).StatusCode);

        Step("outage answers checked");
        cluster.Start();
        Step("PostgreSQL started again");

        await api.WaitForAsync("readiness again", TimeSpan.FromSeconds(60), async () =>
            (await anonymous.GetAsync("/health/ready")).StatusCode == HttpStatusCode.OK);
        Step("ready again");
        // The refit that was cut off mid-fit runs (without waiting for its 5-minute lease) and sees the batch.
        await api.WaitForAsync("the pending refit to run", TimeSpan.FromSeconds(60), async () =>
            await Scenario.LatestAsync(admin, sequenceId) is { } f
            && f.GetProperty("input").GetProperty("eventCount").GetInt32() == 1 + batch.Count);
        Step("pending refit ran");
        // Writes go through again; Npgsql may hand out a connection broken by the restart once, hence the poll.
        var after = Scenario.Aftershocks(Source, "after", 50, seed: 3);
        await api.WaitForAsync("a write to succeed", TimeSpan.FromSeconds(30), async () =>
            (await admin.PostAsJsonAsync("/v1/events", after)).IsSuccessStatusCode);
        await api.WaitForAsync("a forecast that includes the new batch", TimeSpan.FromSeconds(60), async () =>
            await Scenario.LatestAsync(admin, sequenceId) is { } f
            && f.GetProperty("input").GetProperty("eventCount").GetInt32() == 1 + batch.Count + after.Count);
        Assert.False(api.HasExited);
        // The writes refused during the outage changed nothing.
        var sequence = await admin.GetFromJsonAsync<JsonElement>($"/v1/sequences/{sequenceId}");
        Assert.NotEqual("renamed during outage", sequence.GetProperty("name").GetString());
        Assert.Equal(JsonValueKind.Null, sequence.GetProperty("closedAt").ValueKind);
        var keys = await admin.GetStringAsync("/v1/keys");
        Assert.DoesNotContain("during outage", keys, StringComparison.Ordinal);
        Assert.Equal(HttpStatusCode.OK, (await feeder.GetAsync("/v1/events?limit=1")).StatusCode);
        Step("writes and refits work again");
    }

    static async Task AssertUnavailable(HttpResponseMessage r)
    {
        var body = await r.Content.ReadAsStringAsync();
        var what = $"{r.RequestMessage!.Method} {r.RequestMessage.RequestUri!.PathAndQuery}: {(int)r.StatusCode} {body}";
        Assert.True(r.StatusCode == HttpStatusCode.ServiceUnavailable, what);
        Assert.True(r.Headers.RetryAfter?.Delta is { TotalSeconds: > 0 }, "no Retry-After in " + what);
        Assert.Equal("application/problem+json", r.Content.Headers.ContentType?.MediaType);
        var problem = JsonDocument.Parse(body).RootElement;
        Assert.Equal("urn:forecast:problem:unavailable", problem.GetProperty("type").GetString());
        Assert.Equal(503, problem.GetProperty("status").GetInt32());
    }

    static async Task DisposeQuietly(NpgsqlConnection conn)
    {
        try
        {
            await conn.DisposeAsync();
        }
        catch (Exception e) when (e is NpgsqlException or IOException or InvalidOperationException)
        {
            Debug.WriteLine(e.Message); // the server was stopped under it
        }
    }
}
