using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Npgsql;

namespace Forecast.Api.Tests;

public class EventIngestTests(ApiServer api) : IClassFixture<ApiServer>
{
    static object Event(string id, double magnitude = 3.1, string time = "2026-01-10T03:00:00Z",
        double latitude = 10.5, string status = "automatic") => new
    {
        id, source = "zz", time, latitude, longitude = -20.25, depthKm = 8.0, magnitude,
        magnitudeType = "ML", status,
    };

    async Task<long> CountAsync(string table)
    {
        await using var conn = new NpgsqlConnection(api.ConnectionString);
        await conn.OpenAsync();
        await using var cmd = new NpgsqlCommand($"select count(*) from {table}", conn);
        return (long)(await cmd.ExecuteScalarAsync())!;
    }

    [Fact]
    public async Task PostedEventCanBeReadBackWithItsFirstRevision()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var post = await feeder.PostAsJsonAsync("/v1/events", Event("read-1"));
        Assert.Equal(HttpStatusCode.Created, post.StatusCode);
        Assert.Equal("/v1/events/zz/read-1", post.Headers.Location!.OriginalString);

        var got = await feeder.GetFromJsonAsync<JsonElement>("/v1/events/zz/read-1");
        var e = got.GetProperty("event");
        Assert.Equal(3.1, e.GetProperty("magnitude").GetDouble());
        Assert.Equal("2026-01-10T03:00:00Z", e.GetProperty("time").GetString());
        Assert.Equal(1, got.GetProperty("revisions").GetArrayLength());
    }

    [Fact]
    public async Task RepostingTheSameEventChangesNothingAndSaysSo()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        await feeder.PostAsJsonAsync("/v1/events", Event("same-1"));
        var again = await feeder.PostAsJsonAsync("/v1/events", Event("same-1"));
        Assert.Equal(HttpStatusCode.OK, again.StatusCode);
        var body = await again.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal("unchanged", body.GetProperty("outcome").GetString());
        Assert.Equal(1, body.GetProperty("version").GetInt32());
        var history = await feeder.GetFromJsonAsync<JsonElement>("/v1/events/zz/same-1");
        Assert.Equal(1, history.GetProperty("revisions").GetArrayLength());
    }

    [Fact]
    public async Task ABatchNamingAnEventTwiceIsRefusedEvenWhenBothCopiesAreIdenticalAndStored()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        Assert.Equal(HttpStatusCode.Created, (await feeder.PostAsJsonAsync("/v1/events", Event("dup-old"))).StatusCode);
        var events = await CountAsync("event");
        var revisions = await CountAsync("event_revision");

        var response = await feeder.PostAsJsonAsync("/v1/events",
            new[] { Event("dup-new"), Event("dup-old"), Event("dup-new", magnitude: 4), Event("dup-old") });

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var errors = (await response.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("errors");
        Assert.Contains("item [0]", errors.GetProperty("[2].id")[0].GetString()!, StringComparison.Ordinal);
        Assert.Contains("item [1]", errors.GetProperty("[3].id")[0].GetString()!, StringComparison.Ordinal);
        Assert.Equal(events, await CountAsync("event"));
        Assert.Equal(revisions, await CountAsync("event_revision"));
    }

    [Fact]
    public async Task AChangedMagnitudeIsARevisionThatKeepsTheOldVersion()
    {
        var key = await api.NewKeyAsync("feeder");
        using var feeder = api.Client(key);
        await feeder.PostAsJsonAsync("/v1/events", Event("rev-1", magnitude: 4.0));
        var revised = await feeder.PostAsJsonAsync("/v1/events", Event("rev-1", magnitude: 4.3, latitude: 10.6));
        var body = await revised.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal("revised", body.GetProperty("outcome").GetString());
        Assert.Equal(2, body.GetProperty("version").GetInt32());

        var got = await feeder.GetFromJsonAsync<JsonElement>("/v1/events/zz/rev-1");
        Assert.Equal(4.3, got.GetProperty("event").GetProperty("magnitude").GetDouble());
        var revisions = got.GetProperty("revisions").EnumerateArray().ToList();
        Assert.Equal(2, revisions.Count);
        Assert.Equal(4.0, revisions[0].GetProperty("magnitude").GetDouble());
        Assert.Equal(["latitude", "magnitude"],
            revisions[1].GetProperty("changed").EnumerateArray().Select(x => x.GetString()!).Order().ToArray());
        Assert.True(revisions[1].GetProperty("keyId").GetInt64() > 0);
    }

    [Fact]
    public async Task ARetractionHidesTheEventFromQueriesButKeepsItsHistory()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        await feeder.PostAsJsonAsync("/v1/events", Event("gone-1", time: "2025-05-05T05:05:05Z"));
        await feeder.PostAsJsonAsync("/v1/events", Event("gone-1", time: "2025-05-05T05:05:05Z", status: "deleted"));

        var page = await feeder.GetFromJsonAsync<JsonElement>(
            "/v1/events?from=2025-05-05T00:00:00Z&to=2025-05-06T00:00:00Z");
        Assert.Equal(0, page.GetProperty("items").GetArrayLength());
        var withDeleted = await feeder.GetFromJsonAsync<JsonElement>(
            "/v1/events?from=2025-05-05T00:00:00Z&to=2025-05-06T00:00:00Z&includeDeleted=true");
        Assert.Equal("deleted", withDeleted.GetProperty("items")[0].GetProperty("status").GetString());
        var got = await feeder.GetFromJsonAsync<JsonElement>("/v1/events/zz/gone-1");
        Assert.Equal(2, got.GetProperty("revisions").GetArrayLength());
    }

    [Fact]
    public async Task ABatchWithOneBadEventStoresNothingAndNamesTheItemAndField()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await CountAsync("event");
        var batch = new[] { Event("b-1"), Event("b-2", magnitude: 12.5), Event("b-3", latitude: 95) };
        var response = await feeder.PostAsJsonAsync("/v1/events", batch);

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
        var problem = await response.Content.ReadFromJsonAsync<JsonElement>();
        var errors = problem.GetProperty("errors");
        Assert.True(errors.TryGetProperty("[1].magnitude", out _));
        Assert.True(errors.TryGetProperty("[2].latitude", out _));
        Assert.False(errors.TryGetProperty("[0].id", out _));
        Assert.Equal(before, await CountAsync("event"));
    }

    [Fact]
    public async Task ABatchIsCountedByOutcome()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        await feeder.PostAsJsonAsync("/v1/events", Event("c-1"));
        await feeder.PostAsJsonAsync("/v1/events", Event("c-2"));
        var response = await feeder.PostAsJsonAsync("/v1/events",
            new[] { Event("c-1"), Event("c-2", magnitude: 5.0), Event("c-3") });
        var body = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal(3, body.GetProperty("total").GetInt32());
        Assert.Equal(1, body.GetProperty("created").GetInt32());
        Assert.Equal(1, body.GetProperty("revised").GetInt32());
        Assert.Equal(1, body.GetProperty("unchanged").GetInt32());
        Assert.Equal(["unchanged", "revised", "created"],
            body.GetProperty("items").EnumerateArray().Select(i => i.GetProperty("outcome").GetString()!).ToArray());
    }

    [Fact]
    public async Task OverlappingBatchesPostedAtOnceLeaveNoDuplicateAndNoLostRevision()
    {
        var key = await api.NewKeyAsync("feeder");
        // Eight clients post the same 200 events; client k gives event i magnitude 2 + (i + k) % 8 / 10.
        var tasks = Enumerable.Range(0, 8).Select(async k =>
        {
            using var client = api.Client(key);
            var batch = Enumerable.Range(0, 200)
                .Select(i => Event($"race-{i:D3}", magnitude: 2 + (i + k) % 8 / 10.0)).ToArray();
            var response = await client.PostAsJsonAsync("/v1/events", batch);
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
            return await response.Content.ReadFromJsonAsync<JsonElement>();
        });
        var results = await Task.WhenAll(tasks);

        await using var conn = new NpgsqlConnection(api.ConnectionString);
        await conn.OpenAsync();
        await using var cmd = new NpgsqlCommand("""
            select count(*), count(distinct event_id), sum(version),
                   (select count(*) from event_revision r join event e on e.id = r.event_pk where e.event_id like 'race-%')
            from event where event_id like 'race-%'
            """, conn);
        await using var reader = await cmd.ExecuteReaderAsync();
        await reader.ReadAsync();
        Assert.Equal(200, reader.GetInt64(0));
        Assert.Equal(200, reader.GetInt64(1));
        // Every created or revised outcome the clients were told about is one stored revision.
        var told = results.Sum(r => r.GetProperty("created").GetInt32() + r.GetProperty("revised").GetInt32());
        Assert.Equal(told, reader.GetInt64(3));
        Assert.Equal(told, reader.GetInt64(2));
    }

    [Theory]
    [InlineData("text/csv", HttpStatusCode.UnsupportedMediaType)]
    [InlineData("application/json", HttpStatusCode.BadRequest)]
    public async Task UnreadableBodiesAreRefusedAsProblems(string contentType, HttpStatusCode expected)
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var response = await feeder.PostAsync("/v1/events",
            new StringContent("{\"id\": \"x\", ", Encoding.UTF8, contentType));
        Assert.Equal(expected, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
    }

    [Fact]
    public async Task ABodyOverTheLimitIsRefusedWith413()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        // With Expect: 100-continue the server answers before the body is sent, as a careful feed client would see.
        feeder.DefaultRequestHeaders.ExpectContinue = true;
        var huge = new string(' ', 65 * 1024 * 1024) + "[]";
        var response = await feeder.PostAsync("/v1/events", new StringContent(huge, Encoding.UTF8, "application/json"));
        Assert.Equal(HttpStatusCode.RequestEntityTooLarge, response.StatusCode);
    }

    [Fact]
    public async Task TheSameEventTwiceInOneBatchIsRefused()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var response = await feeder.PostAsJsonAsync("/v1/events", new[] { Event("dup-1"), Event("dup-1", magnitude: 4) });
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var problem = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.True(problem.GetProperty("errors").TryGetProperty("[1].id", out _));
    }
}
