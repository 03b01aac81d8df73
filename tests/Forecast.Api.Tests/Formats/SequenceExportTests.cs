using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Forecast.Api.Tests.Sequences;

namespace Forecast.Api.Tests.Formats;

/// <summary>A sequence's events exported by <c>Accept</c> on <c>GET /v1/sequences/{id}/events</c> and imported
/// again unchanged. Events and places are invented.</summary>
public class SequenceExportTests(SequenceApiServer api) : IClassFixture<SequenceApiServer>
{
    static readonly DateTime T0 = DateTime.UtcNow.AddDays(-3);

    async Task<(HttpClient Feeder, long Id, int Members)> SequenceAsync(string source, double lat, string status = "reviewed")
    {
        var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, new[]
        {
            Flow.Event(source, "fore", T0.AddHours(-5), lat + 0.02, 30, 3.1, status, depthKm: 1.0 / 3),
            Flow.Event(source, "main", T0, lat, 30, 4.9, status),
            Flow.Event(source, "a1", T0.AddHours(1.123456), lat - 0.01, 30.01, 3.3, status: "automatic"),
            Flow.Event(source, "a2", T0.AddHours(7), lat + 0.01, 29.99, 2.75, status, depthKm: 0.1 + 0.2),
        });
        var id = await Flow.DeclareAsync(analyst, source, "main");
        return (feeder, id, 4);
    }

    static async Task<string> ExportAsync(HttpClient client, long id, string accept)
    {
        using var request = new HttpRequestMessage(HttpMethod.Get, $"/v1/sequences/{id}/events");
        request.Headers.Accept.Add(new MediaTypeWithQualityHeaderValue(accept));
        var response = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal(accept, response.Content.Headers.ContentType!.MediaType);
        // RFC 9110, 12.5.5: the answer depends on Accept, so caches must key on it.
        Assert.Contains("Accept", response.Headers.Vary);
        return await response.Content.ReadAsStringAsync();
    }

    async Task AssertRoundTripAsync(string source, double lat, string mediaType, string status)
    {
        var (feeder, id, members) = await SequenceAsync(source, lat, status);
        using var _ = feeder;
        var before = await feeder.GetStringAsync($"/v1/sequences/{id}/events");
        var exported = await ExportAsync(feeder, id, mediaType);

        var again = await feeder.PostAsync("/v1/events", new StringContent(exported, Encoding.UTF8, mediaType));
        Assert.Equal(HttpStatusCode.OK, again.StatusCode);
        var summary = await again.Content.ReadFromJsonAsync<JsonElement>();
        // The store compares every field: all "unchanged" means export then import is the identity.
        Assert.True(members == summary.GetProperty("total").GetInt32(),
            $"re-import counted {summary.GetProperty("total").GetInt32()} of {members}; export was:\n{exported}\nmembers before:\n{before}");
        Assert.Equal(members, summary.GetProperty("unchanged").GetInt32());
        Assert.Equal(before, await feeder.GetStringAsync($"/v1/sequences/{id}/events"));
        Assert.Equal(exported, await ExportAsync(feeder, id, mediaType));
    }

    [Fact]
    public async Task QuakeMlOfASequenceReimportsUnchanged() =>
        // QuakeML 1.2 (BED): one event per member, publicID as the id.
        await AssertRoundTripAsync("sx-q", -35, "application/vnd.quakeml+xml", "reviewed");

    [Fact]
    public async Task FdsnTextOfASequenceReimportsUnchanged() =>
        // FDSN web service specification 1.2, fdsnws-event format=text: '#' header and 13 '|' columns, and no
        // review state (an upload's events are automatic unless ?status=reviewed), so the members are automatic.
        await AssertRoundTripAsync("sx-f", -25, "text/plain", "automatic");

    [Fact]
    public async Task JsonStaysTheDefaultWithRolesAndTheExportListsMembersInTimeOrder()
    {
        var (feeder, id, members) = await SequenceAsync("sx-j", -15);
        using var _ = feeder;
        var json = await feeder.GetAsync($"/v1/sequences/{id}/events");
        Assert.Equal("application/json", json.Content.Headers.ContentType!.MediaType);
        var body = await json.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal("main", body.GetProperty("mainshock").GetProperty("id").GetString());
        Assert.Equal(1, body.GetProperty("foreshocks").GetArrayLength());

        var text = await ExportAsync(feeder, id, "text/plain");
        var ids = text.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.Split('|')[0]).ToList();
        Assert.Equal(["fore", "main", "a1", "a2"], ids);
        Assert.Equal(members, ids.Count);

        using var absent = api.Client(await api.NewKeyAsync("analyst"));
        Assert.Equal(HttpStatusCode.NotFound, (await absent.GetAsync("/v1/sequences/999999/events")).StatusCode);
    }
}
