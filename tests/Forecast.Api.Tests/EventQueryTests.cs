using System.Net;
using System.Net.Http.Json;
using System.Text.Json;

namespace Forecast.Api.Tests;

public class EventQueryTests(ApiServer api) : IClassFixture<ApiServer>, IAsyncLifetime
{
    HttpClient _client = null!;

    public async Task InitializeAsync()
    {
        _client = api.Client(await api.NewKeyAsync("feeder"));
        // A 5 x 5 grid of events, one a minute, magnitudes 1.0 to 3.4, around 0.5 N 0.5 E.
        var events = Enumerable.Range(0, 25).Select(i => new
        {
            id = $"q-{i:D2}", source = "qq", time = new DateTime(2024, 2, 1, 0, i, 0, DateTimeKind.Utc).ToString("O"),
            latitude = i / 5 * 0.25, longitude = i % 5 * 0.25, depthKm = 5.0, magnitude = 1.0 + i / 10.0,
            magnitudeType = "ML", status = "reviewed",
        });
        (await _client.PostAsJsonAsync("/v1/events", events)).EnsureSuccessStatusCode();
    }

    public Task DisposeAsync()
    {
        _client.Dispose();
        return Task.CompletedTask;
    }

    async Task<List<string>> Ids(string query)
    {
        var page = await _client.GetFromJsonAsync<JsonElement>("/v1/events?" + query);
        return page.GetProperty("items").EnumerateArray().Select(e => e.GetProperty("id").GetString()!).ToList();
    }

    [Fact]
    public async Task FiltersByTimeAndMagnitudeInTimeOrder()
    {
        var ids = await Ids("from=2024-02-01T00:10:00Z&to=2024-02-01T00:20:00Z&minMagnitude=2.5&maxMagnitude=2.8");
        Assert.Equal(["q-15", "q-16", "q-17", "q-18"], ids);
    }

    [Fact]
    public async Task FiltersByBoundingBox()
    {
        var ids = await Ids("minLatitude=0.2&maxLatitude=0.3&minLongitude=0.7&maxLongitude=1.1");
        Assert.Equal(["q-08", "q-09"], ids);
    }

    [Fact]
    public async Task FiltersByRadiusAroundAPoint()
    {
        // 0.25 degrees of arc is 6371 * pi / 720 = 27.8 km (great circle on a 6371 km sphere).
        var ids = await Ids("latitude=0&longitude=0&radiusKm=28");
        Assert.Equal(["q-00", "q-01", "q-05"], ids);
    }

    [Fact]
    public async Task PagesWithACursorVisitEveryEventOnce()
    {
        var seen = new List<string>();
        string? cursor = null;
        do
        {
            var page = await _client.GetFromJsonAsync<JsonElement>(
                "/v1/events?from=2024-02-01T00:00:00Z&to=2024-02-02T00:00:00Z&limit=7" +
                (cursor is null ? "" : "&cursor=" + cursor));
            seen.AddRange(page.GetProperty("items").EnumerateArray().Select(e => e.GetProperty("id").GetString()!));
            cursor = page.GetProperty("next").ValueKind == JsonValueKind.Null ? null : page.GetProperty("next").GetString();
        } while (cursor is not null);
        Assert.Equal(Enumerable.Range(0, 25).Select(i => $"q-{i:D2}"), seen);
    }

    [Theory]
    [InlineData("minMagnitude=abc", "minMagnitude")]
    [InlineData("from=2024-02-01", "from")]
    [InlineData("limit=0", "limit")]
    [InlineData("cursor=bm9wZQ", "cursor")]
    [InlineData("latitude=1&longitude=2", "radiusKm")]
    [InlineData("minLatitude=-91", "minLatitude")]
    public async Task BadQueryParametersAreNamedInTheProblem(string query, string field)
    {
        var response = await _client.GetAsync("/v1/events?" + query);
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var problem = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.True(problem.GetProperty("errors").TryGetProperty(field, out _), query);
    }

    [Fact]
    public async Task AnUnknownEventIsA404Problem()
    {
        var response = await _client.GetAsync("/v1/events/qq/nope");
        Assert.Equal(HttpStatusCode.NotFound, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
    }
}
