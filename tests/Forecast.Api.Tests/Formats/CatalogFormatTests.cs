using System.Diagnostics;
using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Npgsql;

namespace Forecast.Api.Tests.Formats;

/// <summary>QuakeML 1.2 and FDSN event text in and out of <c>/v1/events</c>, over real HTTP and PostgreSQL.
/// Every document is written here; events and places are invented.</summary>
public class CatalogFormatTests(ApiServer api) : IClassFixture<ApiServer>
{
    const string QuakeMlType = "application/vnd.quakeml+xml";

    static object Json(string id, string time, double magnitude, string status = "automatic", string source = "zz",
        double depthKm = 8.0) => new
    {
        id, source, time, latitude = 10.123456789, longitude = -20.25, depthKm, magnitude,
        magnitudeType = "ML", status,
    };

    static string QuakeMl(params string[] events) => $"""
        <?xml version="1.0" encoding="UTF-8"?>
        <q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2" xmlns="http://quakeml.org/xmlns/bed/1.2">
          <eventParameters publicID="smi:test/ep">
        {string.Join("\n", events)}
          </eventParameters>
        </q:quakeml>
        """;

    static string QuakeMlEvent(string id, string time, string lat = "10.5", string mag = "3.1",
        string agency = "zz") => $"""
            <event publicID="{id}">
              <creationInfo><agencyID>{agency}</agencyID></creationInfo>
              <origin publicID="{id}#o">
                <time><value>{time}</value></time>
                <latitude><value>{lat}</value></latitude>
                <longitude><value>-20.25</value></longitude>
                <depth><value>7500</value></depth>
                <evaluationMode>manual</evaluationMode>
              </origin>
              <magnitude publicID="{id}#m"><mag><value>{mag}</value></mag><type>Mw</type></magnitude>
            </event>
        """;

    const string FdsnHeader =
        "#EventID|Time|Latitude|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|Magnitude|MagAuthor|EventLocationName\n";

    static StringContent Body(string text, string mediaType) => new(text, Encoding.UTF8, mediaType);

    async Task<long> CountEventsAsync()
    {
        await using var conn = new NpgsqlConnection(api.ConnectionString);
        await conn.OpenAsync();
        await using var cmd = new NpgsqlCommand("select count(*) from event", conn);
        return (long)(await cmd.ExecuteScalarAsync())!;
    }

    static async Task<string> GetText(HttpClient client, string url, string accept)
    {
        using var request = new HttpRequestMessage(HttpMethod.Get, url);
        request.Headers.Accept.Add(new MediaTypeWithQualityHeaderValue(accept));
        var response = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal(accept, response.Content.Headers.ContentType!.MediaType);
        return await response.Content.ReadAsStringAsync();
    }

    static async Task<JsonElement> ProblemOf(HttpResponseMessage response, HttpStatusCode status)
    {
        Assert.Equal(status, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
        return await response.Content.ReadFromJsonAsync<JsonElement>();
    }

    [Fact]
    public async Task QuakeMlExportedThenReimportedIsIdentical()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var post = await feeder.PostAsJsonAsync("/v1/events", new[]
        {
            Json("rt-q1", "2024-03-01T01:00:00.123456Z", 3.3),
            Json("rt-q2", "2024-03-01T02:00:00Z", 4.71, "reviewed", depthKm: 1.0 / 3),
            Json("smi:zz/event/rt-q3", "2024-03-01T03:00:00.5Z", 2.0, "deleted", source: "yy-1", depthKm: -0.3),
        });
        Assert.Equal(HttpStatusCode.OK, post.StatusCode);
        const string url = "/v1/events?from=2024-03-01T00:00:00Z&to=2024-03-02T00:00:00Z&includeDeleted=true";
        var json = await feeder.GetStringAsync(url);

        var exported = await GetText(feeder, url, QuakeMlType);
        var again = await feeder.PostAsync("/v1/events", Body(exported, QuakeMlType));
        Assert.Equal(HttpStatusCode.OK, again.StatusCode);
        var summary = await again.Content.ReadFromJsonAsync<JsonElement>();
        // The store compares every field: "unchanged" for all three means export then import is the identity.
        Assert.Equal(3, summary.GetProperty("total").GetInt32());
        Assert.Equal(3, summary.GetProperty("unchanged").GetInt32());
        Assert.Equal(json, await feeder.GetStringAsync(url));
        Assert.Equal(exported, await GetText(feeder, url, QuakeMlType));
    }

    [Fact]
    public async Task FdsnTextExportedThenReimportedIsIdentical()
    {
        // FDSN text has no review state, so the round trip covers automatic and retracted (EventType
        // "not existing") events.
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        await feeder.PostAsJsonAsync("/v1/events", new[]
        {
            Json("rt-f1", "2024-04-01T01:00:00.000001Z", 3.3, depthKm: 0.1 + 0.2),
            Json("rt-f2", "2024-04-01T02:00:00Z", 5.25, "deleted"),
        });
        const string url = "/v1/events?from=2024-04-01T00:00:00Z&to=2024-04-02T00:00:00Z&includeDeleted=true";
        var json = await feeder.GetStringAsync(url);
        var exported = await GetText(feeder, url, "text/plain");
        Assert.StartsWith("#EventID|Time|", exported, StringComparison.Ordinal);

        var again = await feeder.PostAsync("/v1/events", Body(exported, "text/plain"));
        var summary = await again.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal(2, summary.GetProperty("unchanged").GetInt32());
        Assert.Equal(json, await feeder.GetStringAsync(url));
    }

    [Fact]
    public async Task AQuakeMlUploadIsStoredLikeJsonWithRevisions()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var doc = QuakeMl(QuakeMlEvent("smi:zz/event/q-1", "2024-05-01T01:00:00Z"),
            QuakeMlEvent("smi:zz/event/q-2", "2024-05-01T02:00:00Z"));
        var first = await feeder.PostAsync("/v1/events", Body(doc, "application/xml"));
        Assert.Equal(2, (await first.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("created").GetInt32());

        var got = await feeder.GetFromJsonAsync<JsonElement>("/v1/events/zz/smi:zz/event/q-1");
        var e = got.GetProperty("event");
        Assert.Equal(7.5, e.GetProperty("depthKm").GetDouble());
        Assert.Equal("Mw", e.GetProperty("magnitudeType").GetString());
        Assert.Equal("reviewed", e.GetProperty("status").GetString());

        var revised = await feeder.PostAsync("/v1/events", Body(doc.Replace("<value>3.1</value>", "<value>3.4</value>",
            StringComparison.Ordinal), "text/xml"));
        Assert.Equal(2, (await revised.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("revised").GetInt32());
        got = await feeder.GetFromJsonAsync<JsonElement>("/v1/events/zz/smi:zz/event/q-1");
        Assert.Equal(2, got.GetProperty("revisions").GetArrayLength());
    }

    [Fact]
    public async Task TheSourceParameterNamesTheSourceOfEveryEvent()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var post = await feeder.PostAsync("/v1/events?source=feed-9",
            Body(QuakeMl(QuakeMlEvent("src-1", "2024-05-02T01:00:00Z", agency: "other")), QuakeMlType));
        Assert.Equal(HttpStatusCode.OK, post.StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await feeder.GetAsync("/v1/events/feed-9/src-1")).StatusCode);

        var json = await feeder.PostAsJsonAsync("/v1/events?source=feed-9", Json("src-2", "2024-05-02T02:00:00Z", 3));
        var problem = await ProblemOf(json, HttpStatusCode.BadRequest);
        Assert.True(problem.GetProperty("errors").TryGetProperty("source", out _));
    }

    [Fact]
    public async Task ABadEventRefusesTheWholeQuakeMlBatchNamingIndexLineAndPosition()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await CountEventsAsync();
        var doc = QuakeMl(QuakeMlEvent("bad-1", "2024-05-03T01:00:00Z"),
            QuakeMlEvent("bad-2", "2024-05-03T02:00:00Z", lat: "91"));
        var problem = await ProblemOf(await feeder.PostAsync("/v1/events", Body(doc, QuakeMlType)),
            HttpStatusCode.BadRequest);
        Assert.Equal("urn:forecast:problem:validation", problem.GetProperty("type").GetString());
        var message = problem.GetProperty("errors").GetProperty("[1].origin.latitude")[0].GetString()!;
        var line = doc.Split('\n').Select((text, i) => (text, i)).Single(l => l.text.Contains("<value>91<", StringComparison.Ordinal)).i + 1;
        Assert.Contains($"(line {line}, position ", message, StringComparison.Ordinal);
        Assert.Equal(before, await CountEventsAsync());
    }

    [Fact]
    public async Task AQuakeMlDocumentNamingAnEventTwiceIsRefusedWhole()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await CountEventsAsync();
        var doc = QuakeMl(QuakeMlEvent("twice-1", "2024-05-03T01:00:00Z"), QuakeMlEvent("twice-2", "2024-05-03T02:00:00Z"),
            QuakeMlEvent("twice-1", "2024-05-03T03:00:00Z"));
        var problem = await ProblemOf(await feeder.PostAsync("/v1/events", Body(doc, QuakeMlType)),
            HttpStatusCode.BadRequest);
        Assert.Equal("urn:forecast:problem:validation", problem.GetProperty("type").GetString());
        Assert.Contains("item [0]", problem.GetProperty("errors").GetProperty("[2].id")[0].GetString()!,
            StringComparison.Ordinal);
        Assert.Equal(before, await CountEventsAsync());
    }

    public static TheoryData<string, string, string> MaliciousXml()
    {
        var lol = string.Join("\n", Enumerable.Range(1, 9).Select(i =>
            $"<!ENTITY l{i} \"{string.Concat(Enumerable.Repeat($"&l{i - 1};", 10))}\">"));
        var deep = string.Concat(Enumerable.Repeat("<a>", 50_000)) + string.Concat(Enumerable.Repeat("</a>", 50_000));
        return new()
        {
            // W3C XML 1.0, 4.2.2: an external entity reading a local file (XXE).
            { "external entity", """
                <?xml version="1.0"?>
                <!DOCTYPE q [<!ENTITY x SYSTEM "file:///etc/hostname">]>
                <q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2">&x;</q:quakeml>
                """, "DTD" },
            // W3C XML 1.0, 4.2.1: nested internal entities, "billion laughs".
            { "entity expansion", $"<?xml version=\"1.0\"?>\n<!DOCTYPE q [<!ENTITY l0 \"lol\">\n{lol}]>\n" +
                "<q:quakeml xmlns:q=\"http://quakeml.org/xmlns/quakeml/1.2\">&l9;</q:quakeml>", "DTD" },
            { "deep nesting", QuakeMl(deep), "nested more than" },
            { "huge attribute", QuakeMl(QuakeMlEvent(new string('x', 4 * 1024 * 1024), "2024-05-04T01:00:00Z")), "longer than" },
        };
    }

    [Theory]
    [MemberData(nameof(MaliciousXml))]
    public async Task MaliciousXmlIsRefusedQuicklyAndStoresNothing(string attack, string xml, string why)
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await CountEventsAsync();
        var watch = Stopwatch.StartNew();
        var response = await feeder.PostAsync("/v1/events", Body(xml, QuakeMlType));
        var problem = await ProblemOf(response, HttpStatusCode.BadRequest);
        Assert.True(watch.Elapsed < TimeSpan.FromSeconds(3), $"{attack} took {watch.Elapsed}");
        Assert.Equal("urn:forecast:problem:malformed-body", problem.GetProperty("type").GetString());
        Assert.Contains(why, problem.GetProperty("detail").GetString(), StringComparison.Ordinal);
        Assert.DoesNotContain("XmlReaderSettings", problem.GetProperty("detail").GetString(), StringComparison.Ordinal);
        Assert.Equal(before, await CountEventsAsync());
    }

    [Fact]
    public async Task ADocumentRefusedBeforeItsEndIsAnsweredEveryTimeOnAConnectionThatStaysUsable()
    {
        // The reader stops at the first tag over the limit, 4 MiB before the body ends. Copying the body with
        // PipeReader.CopyToAsync into a reader that had stopped sometimes broke Kestrel's body reader, and the
        // connection was reset while the client still sent: a few posts in 60 on a loaded machine. Repeated posts on
        // one kept-alive client make that visible; each must get its problem details.
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await CountEventsAsync();
        var xml = QuakeMl(QuakeMlEvent(new string('y', 4 * 1024 * 1024), "2024-05-04T02:00:00Z"));
        for (var i = 0; i < 40; i++)
        {
            var problem = await ProblemOf(await feeder.PostAsync("/v1/events", Body(xml, QuakeMlType)),
                HttpStatusCode.BadRequest);
            Assert.Equal("urn:forecast:problem:malformed-body", problem.GetProperty("type").GetString());
        }
        Assert.Equal(HttpStatusCode.OK, (await feeder.GetAsync("/v1/events?limit=1")).StatusCode);
        Assert.Equal(before, await CountEventsAsync());
    }

    [Theory]
    [InlineData("f-1|2024-05-05T01:00:00|10|20|5|a|c|zz|f-1|ML|3.0|a|X|extra", "[1]", "has 14 fields")]
    [InlineData("f-1|2024-05-05T01:00:00|10|20|5|a|c|zz", "[1]", "has 8 fields")]
    [InlineData("f-1|2024-05-05T01:00:00|1O.5|20|5|a|c|zz|f-1|ML|3.0|a|X", "[1].Latitude", "must be a number")]
    public async Task BrokenFdsnTextIsRefusedWithItsLineAndStoresNothing(string line, string key, string message)
    {
        // FDSN web service specification v1.2, fdsnws-event text format: 13 '|'-separated columns.
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await CountEventsAsync();
        var good = "f-0|2024-05-05T00:00:00|10|20|5|a|c|zz|f-0|ML|3.0|a|X\n";
        var problem = await ProblemOf(await feeder.PostAsync("/v1/events", Body(FdsnHeader + good + line, "text/plain")),
            HttpStatusCode.BadRequest);
        var text = problem.GetProperty("errors").GetProperty(key)[0].GetString()!;
        Assert.Contains(message, text, StringComparison.Ordinal);
        Assert.EndsWith("(line 3)", text, StringComparison.Ordinal);
        Assert.Equal(before, await CountEventsAsync());
    }

    [Fact]
    public async Task AnUnknownContentTypeIsUnsupported()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        // Routing answers 415 itself from the endpoint's Accepts metadata, as a problem (RFC 9457).
        await ProblemOf(await feeder.PostAsync("/v1/events", Body("a,b", "text/csv")),
            HttpStatusCode.UnsupportedMediaType);
    }

    [Fact]
    public async Task ExportPagesCarryTheNextPageInALinkHeaderAndJsonStaysTheDefault()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        await feeder.PostAsJsonAsync("/v1/events", Enumerable.Range(0, 3)
            .Select(i => Json($"pg-{i}", $"2024-06-01T0{i}:00:00Z", 3)).ToArray());
        const string url = "/v1/events?from=2024-06-01T00:00:00Z&to=2024-06-02T00:00:00Z&limit=2";
        using var request = new HttpRequestMessage(HttpMethod.Get, url);
        request.Headers.Accept.ParseAdd("text/html;q=0.9, application/xml");
        var response = await feeder.SendAsync(request);
        Assert.Equal("application/xml", response.Content.Headers.ContentType!.MediaType);
        var link = Assert.Single(response.Headers.GetValues("Link"));
        Assert.EndsWith("rel=\"next\"", link, StringComparison.Ordinal);
        var next = link[1..link.IndexOf('>', StringComparison.Ordinal)];
        var rest = await GetText(feeder, next, "application/xml");
        Assert.Contains("pg-2", rest, StringComparison.Ordinal);
        Assert.DoesNotContain("pg-0", rest, StringComparison.Ordinal);

        var json = await feeder.GetAsync(url);
        Assert.Equal("application/json", json.Content.Headers.ContentType!.MediaType);
    }
}
