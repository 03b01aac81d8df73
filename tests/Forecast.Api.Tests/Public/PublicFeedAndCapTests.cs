using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using System.Xml.Linq;
using Forecast.Api.Tests.Sequences;
using Forecast.Core.Advisory;

namespace Forecast.Api.Tests.Public;

/// <summary>The GeoJSON feed (RFC 7946) and CAP 1.2 alerts of released forecasts, over real HTTP and PostgreSQL.
/// The test project has no GeoJSON library (NetTopologySuite is referenced by Forecast.Formats.Tests, which reads
/// the writer's output), so the feed is checked here against RFC 7946's rules with System.Text.Json.</summary>
public class PublicFeedAndCapTests(SequenceApiServer api) : IClassFixture<SequenceApiServer>
{
    static readonly DateTime T0 = DateTime.UtcNow.AddDays(-2);
    static readonly XNamespace Cap = "urn:oasis:names:tc:emergency:cap:1.2";
    const string Sender = "aftershock-forecast.invalid";

    async Task<(HttpClient Analyst, long Id, JsonElement Draft)> SequenceAsync(string source, double lat, bool exercise = false)
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, new[]
        {
            Flow.Event(source, "main", T0, lat, 60, 4.8),
            Flow.Event(source, "a1", T0.AddHours(2), lat + 0.01, 60.01, 3.2),
        });
        var id = await Flow.DeclareAsync(analyst, source, "main", new { exercise, name = $"Test sequence {source}" });
        var draft = await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == 2);
        return (analyst, id, draft);
    }

    static async Task<int> ReleaseAsync(HttpClient analyst, long id, int number)
    {
        var r = await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{number}/release", null);
        Assert.Equal(HttpStatusCode.OK, r.StatusCode);
        return number;
    }

    static async Task<JsonElement> ComputeAsync(HttpClient analyst, long id)
    {
        var r = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts", new { });
        Assert.Equal(HttpStatusCode.Created, r.StatusCode);
        return await r.Content.ReadFromJsonAsync<JsonElement>();
    }

    async Task<(JsonElement Root, HttpResponseMessage Response)> FeedAsync()
    {
        using var anonymous = api.Client();
        using var request = new HttpRequestMessage(HttpMethod.Get, "/v1/public/feed.geojson");
        request.Headers.Add("Origin", "https://dashboard.example");
        var response = await anonymous.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        // RFC 7946, 12: the media type is application/geo+json.
        Assert.Equal("application/geo+json", response.Content.Headers.ContentType!.MediaType);
        using var doc = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        return (doc.RootElement.Clone(), response);
    }

    static IEnumerable<JsonElement> FeaturesOf(JsonElement root, long sequenceId) => root.GetProperty("features")
        .EnumerateArray().Where(f => f.GetProperty("properties").GetProperty("sequenceId").GetInt64() == sequenceId);

    async Task<XElement> CapAsync(long id, int number)
    {
        using var anonymous = api.Client();
        var r = await anonymous.GetAsync($"/v1/public/sequences/{id}/forecasts/{number}/cap");
        Assert.Equal(HttpStatusCode.OK, r.StatusCode);
        Assert.Equal("application/cap+xml", r.Content.Headers.ContentType!.MediaType);
        Assert.True(r.Headers.CacheControl!.Public);
        var alert = XDocument.Parse(await r.Content.ReadAsStringAsync()).Root!;
        AssertValidCap(alert);
        return alert;
    }

    async Task<HttpStatusCode> CapStatusAsync(long id, int number)
    {
        using var anonymous = api.Client();
        return (await anonymous.GetAsync($"/v1/public/sequences/{id}/forecasts/{number}/cap")).StatusCode;
    }

    /// <summary>CAP 1.2 (OASIS Standard, 2010), element by element: required elements and their value lists.</summary>
    static void AssertValidCap(XElement alert)
    {
        // 3.2.1 alert: namespace and the required identifier, sender, sent, status, msgType, scope.
        Assert.Equal(Cap + "alert", alert.Name);
        string One(XElement parent, string name) => Assert.Single(parent.Elements(Cap + name)).Value;
        Assert.DoesNotMatch(@"[\s,<&]", One(alert, "identifier"));
        Assert.Equal(Sender, One(alert, "sender"));
        // 3.3.2: dateTime with an explicit offset, no fractions, "-00:00" for UTC rather than "Z".
        Assert.Matches(@"^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d[-+]\d\d:\d\d$", One(alert, "sent"));
        Assert.Contains(One(alert, "status"), new[] { "Actual", "Exercise", "System", "Test", "Draft" });
        Assert.Contains(One(alert, "msgType"), new[] { "Alert", "Update", "Cancel", "Ack", "Error" });
        Assert.Contains(One(alert, "scope"), new[] { "Public", "Restricted", "Private" });
        // 3.2.2 info: category, event, urgency, severity, certainty required, from their value lists.
        var info = Assert.Single(alert.Elements(Cap + "info"));
        Assert.Equal("Geo", One(info, "category"));
        Assert.False(string.IsNullOrWhiteSpace(One(info, "event")));
        Assert.Contains(One(info, "urgency"), new[] { "Immediate", "Expected", "Future", "Past", "Unknown" });
        Assert.Contains(One(info, "severity"), new[] { "Extreme", "Severe", "Moderate", "Minor", "Unknown" });
        Assert.Contains(One(info, "certainty"), new[] { "Observed", "Likely", "Possible", "Unlikely", "Unknown" });
        Assert.False(string.IsNullOrWhiteSpace(One(info, "description")));
        Assert.False(string.IsNullOrWhiteSpace(One(info, "instruction")));
        // 3.2.2 headline: "SHOULD be less than 160 characters".
        Assert.True(One(info, "headline").Length <= 160);
        Assert.StartsWith("http", One(info, "web"), StringComparison.Ordinal);
        // 3.2.4 area: areaDesc required; circle "latitude,longitude radius" (WGS 84, km).
        var area = Assert.Single(info.Elements(Cap + "area"));
        Assert.False(string.IsNullOrWhiteSpace(One(area, "areaDesc")));
        Assert.Matches(@"^-?\d+(\.\d+)?,-?\d+(\.\d+)? \d+(\.\d+)?$", One(area, "circle"));
    }

    static string Value(XElement alert, string name) =>
        alert.Element(Cap + name)?.Value ?? alert.Element(Cap + "info")!.Element(Cap + name)!.Value;

    [Fact]
    public async Task TheFeedFollowsRfc7946AndListsOnlyReleasedForecasts()
    {
        var (analyst, released, draft) = await SequenceAsync("feed-r", -30);
        using var _ = analyst;
        var n = await ReleaseAsync(analyst, released, draft.GetProperty("number").GetInt32());
        // A newer draft is not what the feed shows.
        await ComputeAsync(analyst, released);
        var (draftOnlyAnalyst, draftOnly, _) = await SequenceAsync("feed-d", -20);
        using var __ = draftOnlyAnalyst;
        var (withdrawnAnalyst, withdrawn, w) = await SequenceAsync("feed-w", -10);
        using var ___ = withdrawnAnalyst;
        var wn = await ReleaseAsync(withdrawnAnalyst, withdrawn, w.GetProperty("number").GetInt32());
        Assert.Equal(HttpStatusCode.OK, (await withdrawnAnalyst.PostAsync($"/v1/sequences/{withdrawn}/forecasts/{wn}/withdraw", null)).StatusCode);

        var (root, response) = await FeedAsync();
        // Served like the other public reads: cacheable by anyone, readable from other origins.
        Assert.True(response.Headers.CacheControl!.Public);
        Assert.Equal(TimeSpan.FromSeconds(60), response.Headers.CacheControl.MaxAge);
        Assert.Equal("*", response.Headers.GetValues("Access-Control-Allow-Origin").Single());
        Assert.NotNull(response.Headers.ETag);

        // RFC 7946, 3.3: a FeatureCollection with a "features" array; 4: no "crs" member.
        Assert.Equal("FeatureCollection", root.GetProperty("type").GetString());
        Assert.False(root.TryGetProperty("crs", out var crs), $"crs: {crs}");
        Assert.Empty(FeaturesOf(root, draftOnly));
        Assert.Empty(FeaturesOf(root, withdrawn));
        var features = FeaturesOf(root, released).ToList();
        Assert.Equal(2, features.Count);
        foreach (var f in features)
        {
            // RFC 7946, 3.2: a Feature has "type": "Feature", a "geometry" and a "properties" member.
            Assert.Equal("Feature", f.GetProperty("type").GetString());
            var p = f.GetProperty("properties");
            Assert.Equal("released", p.GetProperty("state").GetString());
            Assert.Equal(n, p.GetProperty("number").GetInt32());
            Assert.False(p.GetProperty("exercise").GetBoolean());
            Assert.Equal(JsonValueKind.Null, p.GetProperty("notice").ValueKind);
        }

        // RFC 7946, 3.1.2 and 3.1.1: a Point's coordinates are one position, [longitude, latitude].
        var point = features.Single(f => f.GetProperty("properties").GetProperty("role").GetString() == "mainshock");
        Assert.Equal("Point", point.GetProperty("geometry").GetProperty("type").GetString());
        var xy = point.GetProperty("geometry").GetProperty("coordinates");
        Assert.Equal(60, xy[0].GetDouble(), 6);
        Assert.Equal(-30, xy[1].GetDouble(), 6);

        // RFC 7946, 3.1.6: a Polygon is an array of linear rings; a ring is closed (first = last) with four or
        // more positions, and the exterior ring is counter-clockwise (positive shoelace area in lon/lat).
        var zone = features.Single(f => f.GetProperty("properties").GetProperty("role").GetString() == "zone");
        Assert.Equal("Polygon", zone.GetProperty("geometry").GetProperty("type").GetString());
        var ring = Assert.Single(zone.GetProperty("geometry").GetProperty("coordinates").EnumerateArray())
            .EnumerateArray().Select(q => (Lon: q[0].GetDouble(), Lat: q[1].GetDouble())).ToList();
        Assert.True(ring.Count >= 4);
        Assert.Equal(ring[0], ring[^1]);
        var twiceArea = 0.0;
        for (var i = 0; i < ring.Count - 1; i++) twiceArea += ring[i].Lon * ring[i + 1].Lat - ring[i + 1].Lon * ring[i].Lat;
        Assert.True(twiceArea > 0, $"exterior ring is clockwise (2A = {twiceArea})");
        // 3.1.1 order again: the ring lies around the mainshock, latitudes within [-90, 90].
        Assert.All(ring, q => Assert.InRange(q.Lat, -31, -29));
        Assert.All(ring, q => Assert.InRange(q.Lon, 59, 61));

        // The headline cell is the forecast's own one-week cell at M >= 5.
        var forecast = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{released}/forecasts/{n}");
        var cell = Flow.Cell(forecast, 7, 5);
        var props = zone.GetProperty("properties");
        Assert.Equal(5, props.GetProperty("minMagnitude").GetDouble());
        Assert.Equal(cell.GetProperty("probability").GetDouble(), props.GetProperty("probability").GetDouble(), 12);
        Assert.Equal(cell.GetProperty("expectedNumber").GetDouble(), props.GetProperty("expectedNumber").GetDouble(), 12);
        Assert.Equal(cell.GetProperty("low95").GetInt32(), props.GetProperty("expectedLow").GetInt32());
        Assert.Equal(cell.GetProperty("high95").GetInt32(), props.GetProperty("expectedHigh").GetInt32());
        var start = DateTime.Parse(props.GetProperty("windowStart").GetString()!, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind);
        var end = DateTime.Parse(props.GetProperty("windowEnd").GetString()!, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind);
        // Window ends are mainshock time + days (a double), so they land within a microsecond of a whole week.
        Assert.InRange((end - start - TimeSpan.FromDays(7)).Duration(), TimeSpan.Zero, TimeSpan.FromMilliseconds(1));

        // The advisory link is absolute and leads to the public forecast it summarises.
        var advisory = new Uri(props.GetProperty("advisory").GetString()!);
        Assert.True(advisory.IsAbsoluteUri);
        using var anonymous = api.Client();
        var pub = await anonymous.GetFromJsonAsync<JsonElement>(advisory);
        Assert.Equal(n, pub.GetProperty("number").GetInt32());
        Assert.Equal(HttpStatusCode.OK, (await anonymous.GetAsync(new Uri(props.GetProperty("cap").GetString()!))).StatusCode);

        // RFC 9110, 13.1.2: a matching If-None-Match answers 304.
        using var conditional = new HttpRequestMessage(HttpMethod.Get, "/v1/public/feed.geojson");
        conditional.Headers.IfNoneMatch.Add(response.Headers.ETag!);
        Assert.Equal(HttpStatusCode.NotModified, (await anonymous.SendAsync(conditional)).StatusCode);
    }

    [Fact]
    public async Task CapAlertsGoAlertThenUpdateWithReferencesThenCancelAndDraftsHaveNone()
    {
        var (analyst, id, draft) = await SequenceAsync("cap", 10);
        using var _ = analyst;
        var one = draft.GetProperty("number").GetInt32();
        // A draft never had an alert.
        Assert.Equal(HttpStatusCode.NotFound, await CapStatusAsync(id, one));
        await ReleaseAsync(analyst, id, one);

        var first = await CapAsync(id, one);
        Assert.Equal("Alert", Value(first, "msgType"));
        Assert.Equal("Actual", Value(first, "status"));
        Assert.Null(first.Element(Cap + "references"));
        Assert.Equal($"forecast-{id}-{one}", Value(first, "identifier"));

        // The documented rule, from the forecast's own one-week M >= 5 cell.
        var cell = Flow.Cell(draft, 7, 5);
        var p = cell.GetProperty("probability").GetDouble();
        Assert.Equal(p > 0.5 ? "Likely" : p >= 0.01 ? "Possible" : "Unlikely", Value(first, "certainty"));
        Assert.Equal("Moderate", Value(first, "severity"));
        Assert.Equal(p > 0.5 ? "Expected" : "Future", Value(first, "urgency"));
        Assert.Contains("%", Value(first, "description"), StringComparison.Ordinal);
        Assert.Contains("the Test Seismic Service", Value(first, "instruction"), StringComparison.Ordinal);

        var two = (await ComputeAsync(analyst, id)).GetProperty("number").GetInt32();
        Assert.Equal(HttpStatusCode.NotFound, await CapStatusAsync(id, two));
        await ReleaseAsync(analyst, id, two);
        var update = await CapAsync(id, two);
        Assert.Equal("Update", Value(update, "msgType"));
        // CAP 1.2, 3.2.1 references: "sender,identifier,sent" of each earlier message, space-separated.
        Assert.Equal($"{Sender},forecast-{id}-{one},{Value(first, "sent")}", Value(update, "references"));
        // The superseded forecast still serves the alert it was.
        Assert.Equal("Alert", Value(await CapAsync(id, one), "msgType"));

        Assert.Equal(HttpStatusCode.OK, (await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts/{two}/withdraw",
            new { reason = "internal: wrong Mc" })).StatusCode);
        var cancel = await CapAsync(id, two);
        Assert.Equal("Cancel", Value(cancel, "msgType"));
        Assert.Equal($"forecast-{id}-{two}-cancel", Value(cancel, "identifier"));
        Assert.Equal($"{Sender},forecast-{id}-{two},{Value(update, "sent")}", Value(cancel, "references"));
        Assert.DoesNotContain("wrong Mc", Value(cancel, "description"), StringComparison.Ordinal);

        // A draft withdrawn before release never had an alert to cancel; nor has a number that does not exist.
        var three = (await ComputeAsync(analyst, id)).GetProperty("number").GetInt32();
        Assert.Equal(HttpStatusCode.OK, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{three}/withdraw", null)).StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, await CapStatusAsync(id, three));
        Assert.Equal(HttpStatusCode.NotFound, await CapStatusAsync(id, 9999));
        Assert.Equal(HttpStatusCode.NotFound, await CapStatusAsync(999_999, 1));
    }

    [Fact]
    public async Task ADrillIsStatusExerciseInCapAndMarkedInTheFeed()
    {
        var (analyst, id, draft) = await SequenceAsync("cap-drill", 20, exercise: true);
        using var _ = analyst;
        var n = await ReleaseAsync(analyst, id, draft.GetProperty("number").GetInt32());

        // CAP 1.2, 3.2.1 status: "Exercise - Actionable only by designated exercise participants".
        var alert = await CapAsync(id, n);
        Assert.Equal("Exercise", Value(alert, "status"));
        Assert.StartsWith(AdvisoryBuilder.ExerciseMarker, Value(alert, "description"), StringComparison.Ordinal);
        Assert.StartsWith("EXERCISE", Value(alert, "headline"), StringComparison.Ordinal);

        var (root, _) = await FeedAsync();
        Assert.All(FeaturesOf(root, id), f =>
        {
            var p = f.GetProperty("properties");
            Assert.True(p.GetProperty("exercise").GetBoolean());
            Assert.Contains(AdvisoryBuilder.ExerciseMarker, p.GetProperty("notice").GetString(), StringComparison.Ordinal);
        });
        Assert.NotEmpty(FeaturesOf(root, id));
    }
}
