using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;

namespace Forecast.Api.Tests.Stress;

/// <summary>The API with small limits, no refit worker (so nothing changes in the database behind a test's back),
/// and a sequence of an exercise with one draft forecast to aim the forecast and sequence writes at.</summary>
public sealed class CorpusServer : ApiServer, IAsyncLifetime
{
    /// <summary>Small limits so that bodies and batches over them are cheap to send; the mechanism is the same at
    /// the defaults (64 MiB, 200,000 events; EventIngestTests sends 65 MiB).</summary>
    public const int MaxBodyBytes = 256 * 1024;
    public const int MaxEventsPerPost = 100;

    public long SequenceId { get; private set; }
    public int DraftNumber { get; private set; }
    public Dictionary<string, string> Keys { get; } = [];

    protected override IReadOnlyDictionary<string, string> Settings => new Dictionary<string, string>
    {
        ["RefitWorker:Enabled"] = "false",
        ["Forecasts:BootstrapSamples"] = "0",
        ["Ingest:MaxBodyBytes"] = MaxBodyBytes.ToString(System.Globalization.CultureInfo.InvariantCulture),
        ["Ingest:MaxEventsPerPost"] = MaxEventsPerPost.ToString(System.Globalization.CultureInfo.InvariantCulture),
        ["Ingest:MaxCatalogBodyBytes"] = MaxBodyBytes.ToString(System.Globalization.CultureInfo.InvariantCulture),
    };

    public new async Task InitializeAsync()
    {
        await base.InitializeAsync();
        Keys["feeder"] = await NewKeyAsync("feeder", "corpus feeder");
        Keys["analyst"] = await NewKeyAsync("analyst", "corpus analyst");
        Keys["admin"] = AdminKey;
        using var feeder = Client(Keys["feeder"]);
        using var analyst = Client(Keys["analyst"]);
        var t0 = DateTime.UtcNow.AddDays(-1).ToString("yyyy-MM-ddTHH:mm:ssZ", System.Globalization.CultureInfo.InvariantCulture);
        var post = await feeder.PostAsJsonAsync("/v1/events", new
        {
            id = "main", source = "corpus", time = t0, latitude = 45.0, longitude = 10.0, depthKm = 10.0,
            magnitude = 4.5, magnitudeType = "Mw", status = "reviewed",
        });
        post.EnsureSuccessStatusCode();
        var declared = await analyst.PostAsJsonAsync("/v1/sequences",
            new { mainshock = new { source = "corpus", id = "main" }, exercise = true });
        declared.EnsureSuccessStatusCode();
        SequenceId = (await declared.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("id").GetInt64();
        var computed = await analyst.PostAsJsonAsync($"/v1/sequences/{SequenceId}/forecasts", new { });
        computed.EnsureSuccessStatusCode();
        DraftNumber = (await computed.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32();
    }
}

/// <summary>One hostile or broken request. <see cref="Path"/> may hold <c>{seq}</c> and <c>{draft}</c>;
/// <see cref="Endpoint"/> is the route it aims at, as the app's EndpointDataSource names it.</summary>
public sealed record Hostile(
    string Name, string Standard, string Endpoint, string Path, string Role, string? ContentType,
    Func<byte[]>? Body, int Status)
{
    /// <summary>Send the body without a Content-Length (HTTP/1.1 chunked, RFC 9112, 7.1).</summary>
    public bool Chunked { get; init; }

    /// <summary>Kestrel refuses the request line itself (RFC 9112, 3), before any middleware: a bare 400 that the
    /// application cannot turn into a problem.</summary>
    public bool ByKestrel { get; init; }
}

/// <summary>A table of hostile and broken requests against every write endpoint. Each must be answered with a
/// 4xx RFC 9457 problem, change no row of any table, and leave the service ready.</summary>
public class BadInputCorpusTests(CorpusServer api) : IClassFixture<CorpusServer>
{
    const string Json = "application/json";
    const string QuakeMlType = "application/vnd.quakeml+xml";
    const string Events = "POST /v1/events";
    const string CreateKey = "POST /v1/keys";
    const string RevokeKey = "POST /v1/keys/{id:long}/revoke";
    const string Declare = "POST /v1/sequences";
    const string Edit = "PATCH /v1/sequences/{id:long}";
    const string Close = "POST /v1/sequences/{id:long}/close";
    const string Compute = "POST /v1/sequences/{id:long}/forecasts";
    const string Release = "POST /v1/sequences/{id:long}/forecasts/{number:int}/release";
    const string Withdraw = "POST /v1/sequences/{id:long}/forecasts/{number:int}/withdraw";

    static byte[] Utf8(string s) => Encoding.UTF8.GetBytes(s);

    /// <summary>The text with "@@" replaced by raw bytes (to put invalid UTF-8 inside otherwise valid JSON).</summary>
    static byte[] Splice(string text, params byte[] raw)
    {
        var at = text.IndexOf("@@", StringComparison.Ordinal);
        return [.. Utf8(text[..at]), .. raw, .. Utf8(text[(at + 2)..])];
    }

    static readonly (string Field, string Raw)[] EventFields =
    [
        ("id", "\"c-1\""), ("source", "\"corpus\""), ("time", "\"2026-01-01T00:00:00Z\""), ("latitude", "45.1"),
        ("longitude", "10.1"), ("depthKm", "8"), ("magnitude", "3.1"), ("magnitudeType", "\"ML\""),
        ("status", "\"automatic\""),
    ];

    /// <summary>A valid JSON event with fields replaced (raw JSON), removed (null) or added.</summary>
    static string Ev(params (string Field, string? Raw)[] changes)
    {
        var fields = EventFields.Select(f => (f.Field, Raw: (string?)f.Raw)).ToList();
        foreach (var (field, raw) in changes)
        {
            var i = fields.FindIndex(f => f.Field == field);
            if (i >= 0) fields[i] = (field, raw);
            else fields.Add((field, raw));
        }
        return "{" + string.Join(", ", fields.Where(f => f.Raw is not null).Select(f => $"\"{f.Field}\": {f.Raw}")) + "}";
    }

    static string GoodEvents(int n) => "[" + string.Join(",", Enumerable.Range(0, n).Select(i => Ev(("id", $"\"n-{i}\"")))) + "]";

    static string QuakeMl(string events, string prolog = "") => $"""
        <?xml version="1.0" encoding="UTF-8"?>
        {prolog}<q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2" xmlns="http://quakeml.org/xmlns/bed/1.2">
          <eventParameters publicID="smi:corpus/ep">{events}</eventParameters>
        </q:quakeml>
        """;

    static string QEvent(string id = "smi:corpus/q-1", string lat = "45.1", string mag = "3.1", string time = "2026-01-01T00:00:00Z") => $"""
        <event publicID="{id}">
          <creationInfo><agencyID>corpus</agencyID></creationInfo>
          <origin publicID="{id}#o"><time><value>{time}</value></time><latitude><value>{lat}</value></latitude>
            <longitude><value>10.1</value></longitude><depth><value>8000</value></depth></origin>
          <magnitude publicID="{id}#m"><mag><value>{mag}</value></mag><type>ML</type></magnitude>
        </event>
        """;

    const string FdsnHeader =
        "#EventID|Time|Latitude|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|Magnitude|MagAuthor|EventLocationName\n";

    static string Fdsn(params string[] lines) => FdsnHeader + string.Join("\n", lines) + "\n";

    const string FdsnGood = "f-1|2026-01-01T00:00:00|45.1|10.1|8|a|c|corpus|f-1|ML|3.1|a|Corpus";

    static string Deep(int depth, string open, string inner, string close) =>
        string.Concat(Enumerable.Repeat(open, depth)) + inner + string.Concat(Enumerable.Repeat(close, depth));

    static Hostile E(string name, string standard, string body, int status = 400, string? type = Json) =>
        new(name, standard, Events, "/v1/events", "feeder", type, () => Utf8(body), status);

    static Hostile EB(string name, string standard, Func<byte[]> body, int status = 400, string? type = Json) =>
        new(name, standard, Events, "/v1/events", "feeder", type, body, status);

    static Hostile K(string name, string standard, string body, int status = 400, string? type = Json) =>
        new(name, standard, CreateKey, "/v1/keys", "admin", type, () => Utf8(body), status);

    static Hostile D(string name, string standard, string body, int status = 400, string? type = Json) =>
        new(name, standard, Declare, "/v1/sequences", "analyst", type, () => Utf8(body), status);

    static Hostile P(string name, string standard, string body, int status = 400, string path = "/v1/sequences/{seq}",
        string? type = Json) => new(name, standard, Edit, path, "analyst", type, () => Utf8(body), status);

    static Hostile C(string name, string standard, string body, int status = 400, string? type = Json,
        string path = "/v1/sequences/{seq}/forecasts") => new(name, standard, Compute, path, "analyst", type, () => Utf8(body), status);

    static Hostile R(string name, string standard, string body, int status = 400, string? type = Json,
        string path = "/v1/sequences/{seq}/forecasts/{draft}/release") =>
        new(name, standard, Release, path, "analyst", type, () => Utf8(body), status);

    static Hostile W(string name, string standard, string body, int status = 400, string? type = Json,
        string path = "/v1/sequences/{seq}/forecasts/{draft}/withdraw") =>
        new(name, standard, Withdraw, path, "analyst", type, () => Utf8(body), status);

    static readonly byte[] OverLimit = Utf8("[" + new string(' ', CorpusServer.MaxBodyBytes + 1024) + "]");

    public static readonly IReadOnlyList<Hostile> Cases =
    [
        // ---- POST /v1/events, JSON (RFC 8259) ----
        E("events: latitude is a string", "RFC 8259 §6 (a number is not a string)", Ev(("latitude", "\"45.1\""))),
        E("events: magnitude is a boolean", "RFC 8259 §3", Ev(("magnitude", "true"))),
        E("events: id is a number", "RFC 8259 §3", Ev(("id", "17"))),
        E("events: time is a Unix timestamp number", "ISO 8601 / RFC 3339 §5.6", Ev(("time", "1767225600"))),
        E("events: body is a bare string", "RFC 8259 §2", "\"an event\""),
        E("events: body is null", "RFC 8259 §3", "null"),
        E("events: body is a number", "RFC 8259 §2", "42"),
        E("events: missing time", "API contract: time is required", Ev(("time", null))),
        E("events: missing every field", "API contract", "{}"),
        E("events: extra field", "API contract: unknown fields are refused", Ev(("depth", "8"))),
        E("events: duplicate member name", "RFC 8259 §4 (names SHOULD be unique)", Ev(("magnitude", "3.1, \"magnitude\": 9.9"))),
        E("events: NaN literal", "RFC 8259 §6 (NaN is not permitted)", Ev(("magnitude", "NaN"))),
        E("events: Infinity literal", "RFC 8259 §6 (Infinity is not permitted)", Ev(("depthKm", "Infinity"))),
        E("events: -Infinity literal", "RFC 8259 §6", Ev(("longitude", "-Infinity"))),
        E("events: NaN as a string", "RFC 8259 §6", Ev(("latitude", "\"NaN\""))),
        E("events: number overflowing a double", "RFC 8259 §6, IEEE 754 binary64", Ev(("magnitude", "1e400"))),
        E("events: latitude just above 90", "WGS 84 latitude range", Ev(("latitude", "90.000001"))),
        E("events: absurd magnitude", "API contract: magnitude -2..10", Ev(("magnitude", "1.7976931348623157e308"))),
        E("events: absurd depth", "API contract: depth -10..800 km", Ev(("depthKm", "-1000000"))),
        E("events: longitude 540", "WGS 84 longitude range", Ev(("longitude", "540"))),
        E("events: time in year 9999", "API contract: at most 5 minutes ahead", Ev(("time", "\"9999-12-31T23:59:59Z\""))),
        E("events: time without offset", "RFC 3339 §4.4 (local time is ambiguous)", Ev(("time", "\"2026-01-01T00:00:00\""))),
        E("events: impossible date", "RFC 3339 §5.7", Ev(("time", "\"2026-02-30T25:61:00Z\""))),
        E("events: status in upper case", "API contract: automatic, reviewed, deleted", Ev(("status", "\"DELETED\""))),
        E("events: empty batch", "API contract", "[]"),
        E("events: one more event than the batch limit", "API contract: Ingest:MaxEventsPerPost",
            GoodEvents(CorpusServer.MaxEventsPerPost + 1)),
        EB("events: enormous batch of 100,000 zeros", "API contract: Ingest:MaxEventsPerPost",
            () => Utf8("[" + string.Join(",", Enumerable.Repeat("0", 100_000)) + "]")),
        E("events: one bad event among good ones", "API contract: all or nothing",
            "[" + Ev(("id", "\"g-1\"")) + "," + Ev(("id", "\"g-2\""), ("latitude", "-91")) + "]"),
        E("events: nested array", "API contract: an array of objects", "[[" + Ev() + "]]"),
        E("events: deeply nested arrays", "RFC 8259 §9 (implementations may limit nesting)", Deep(10_000, "[", "", "]")),
        E("events: deeply nested object in a field", "RFC 8259 §9", Ev(("id", Deep(100, "{\"a\":", "1", "}")))),
        E("events: empty body", "RFC 8259 §2 (a JSON text is a value)", ""),
        E("events: truncated JSON", "RFC 8259 §2", Ev()[..40]),
        E("events: XML sent as JSON", "RFC 8259 §2", QuakeMl(QEvent())),
        EB("events: invalid UTF-8 byte in a string", "RFC 3629 §3, RFC 8259 §8.1",
            () => Splice("{\"id\": \"c-@@\", \"source\": \"corpus\"}", 0xC3, 0x28)),
        EB("events: overlong UTF-8 encoding of '/'", "RFC 3629 §3 and §10 (overlong forms are invalid)",
            () => Splice(Ev(("id", "\"a@@etc\"")), 0xC0, 0xAF)),
        EB("events: UTF-8 encoded surrogate half", "RFC 3629 §3 (U+D800..U+DFFF are not encoded)",
            () => Splice(Ev(("id", "\"a@@\"")), 0xED, 0xA0, 0x80)),
        EB("events: UTF-16 body", "RFC 8259 §8.1 (JSON exchanged between systems is UTF-8)",
            () => Encoding.Unicode.GetBytes(Ev())),
        E("events: id with a NUL character", "API contract: printable ids", Ev(("id", "\"a\\u0000b\""))),
        E("events: id with a newline", "API contract: printable ids", Ev(("id", "\"a\\nb\""))),
        E("events: id with an escape sequence", "ECMA-48 (terminal escapes in logs)", Ev(("id", "\"\\u001b[31mred\""))),
        E("events: id with path traversal", "RFC 3986 §3.3 (dot segments)", Ev(("id", "\"../../etc/passwd\""))),
        E("events: id with backslash traversal", "API contract: no backslashes", Ev(("id", "\"..\\\\..\\\\windows\""))),
        E("events: id longer than 200 characters", "API contract", Ev(("id", "\"" + new string('x', 201) + "\""))),
        E("events: 200 kB id under the body limit", "API contract", Ev(("id", "\"" + new string('x', 200_000) + "\""))),
        E("events: SQL in the source", "OWASP A03 injection", Ev(("source", "\"zz'; drop table event; --\""))),
        E("events: SQL in the status", "OWASP A03 injection", Ev(("status", "\"automatic' or '1'='1\""))),
        E("events: SQL in the magnitude type", "OWASP A03 injection", Ev(("magnitudeType", "\"ML);delete from event;--\""))),
        E("events: source query parameter on JSON", "API contract", Ev()) with { Path = "/v1/events?source=zz" },
        E("events: text/csv", "RFC 9110 §15.5.16 (415)", "id,time\nc-1,2026-01-01T00:00:00Z", 415, "text/csv"),
        E("events: no content type", "RFC 9110 §8.3 and §15.5.16", Ev(), 415, null),
        E("events: form encoding", "RFC 9110 §15.5.16", "id=c-1&source=corpus", 415, "application/x-www-form-urlencoded"),
        E("events: unparseable content type", "RFC 9110 §8.3.1", Ev(), 415, "json"),
        EB("events: body over the limit with Content-Length", "RFC 9110 §15.5.14 (413)", () => OverLimit, 413),
        EB("events: chunked body over the limit", "RFC 9112 §7.1, RFC 9110 §15.5.14", () => OverLimit, 413) with { Chunked = true },

        // ---- POST /v1/events, QuakeML 1.2 (W3C XML 1.0) ----
        E("quakeml: external entity (XXE)", "W3C XML 1.0 §4.2.2, OWASP XXE",
            QuakeMl(QEvent(id: "&x;"), "<!DOCTYPE q [<!ENTITY x SYSTEM \"file:///etc/passwd\">]>\n"), 400, QuakeMlType),
        E("quakeml: external DTD", "W3C XML 1.0 §2.8",
            QuakeMl(QEvent(), "<!DOCTYPE q SYSTEM \"http://127.0.0.1:9/evil.dtd\">\n"), 400, "application/xml"),
        E("quakeml: entity expansion (billion laughs)", "W3C XML 1.0 §4.2.1",
            QuakeMl("&l9;", "<!DOCTYPE q [<!ENTITY l0 \"lol\">" + string.Concat(Enumerable.Range(1, 9).Select(i =>
                $"<!ENTITY l{i} \"{string.Concat(Enumerable.Repeat($"&l{i - 1};", 10))}\">")) + "]>\n"), 400, "text/xml"),
        E("quakeml: deeply nested elements", "W3C XML 1.0 §3", QuakeMl(Deep(20_000, "<a>", "", "</a>")), 400, QuakeMlType),
        E("quakeml: not XML at all", "W3C XML 1.0 §2.1", "this is not a document", 400, QuakeMlType),
        E("quakeml: truncated document", "W3C XML 1.0 §2.1", QuakeMl(QEvent())[..200], 400, QuakeMlType),
        E("quakeml: no events", "API contract", QuakeMl(""), 400, QuakeMlType),
        E("quakeml: NaN latitude", "QuakeML 1.2 RealQuantity, IEEE 754", QuakeMl(QEvent(lat: "NaN")), 400, QuakeMlType),
        E("quakeml: INF magnitude", "QuakeML 1.2 RealQuantity", QuakeMl(QEvent(mag: "INF")), 400, QuakeMlType),
        E("quakeml: latitude 91", "WGS 84 latitude range", QuakeMl(QEvent(lat: "91")), 400, QuakeMlType),
        E("quakeml: magnitude as text", "QuakeML 1.2 RealQuantity", QuakeMl(QEvent(mag: "large")), 400, QuakeMlType),
        E("quakeml: event without an origin", "QuakeML 1.2 (an event needs its origin)",
            QuakeMl("<event publicID=\"smi:corpus/q-9\"><magnitude publicID=\"m\"><mag><value>3</value></mag></magnitude></event>"),
            400, QuakeMlType),
        E("quakeml: control character reference in an id", "W3C XML 1.0 §2.2 and §4.1 (Char)",
            QuakeMl(QEvent(id: "smi:corpus/a&#1;b")), 400, QuakeMlType),
        E("quakeml: path traversal in the publicID", "RFC 3986 §3.3", QuakeMl(QEvent(id: "../../etc/passwd")), 400, QuakeMlType),
        E("quakeml: time without a date", "QuakeML 1.2 TimeQuantity (ISO 8601)", QuakeMl(QEvent(time: "25:00")), 400, QuakeMlType),
        E("quakeml: status query parameter", "API contract: status is for FDSN text", QuakeMl(QEvent()), 400, QuakeMlType)
            with { Path = "/v1/events?status=reviewed" },
        E("quakeml: SQL in the source parameter", "OWASP A03 injection", QuakeMl(QEvent()), 400, QuakeMlType)
            with { Path = "/v1/events?source=x%27%3Bdrop%20table%20event%3B--" },
        EB("quakeml: invalid UTF-8", "RFC 3629 §3, W3C XML 1.0 §4.3.3",
            () => Splice(QuakeMl(QEvent(id: "smi:corpus/@@")), 0xFF, 0xFE, 0x00), 400, QuakeMlType),
        E("quakeml: body over the limit", "RFC 9110 §15.5.14",
            QuakeMl(QEvent() + "<!--" + new string('x', CorpusServer.MaxBodyBytes) + "-->"), 413, QuakeMlType),
        E("fdsn: body over the limit", "RFC 9110 §15.5.14",
            Fdsn(Enumerable.Range(0, 6000).Select(i => FdsnGood.Replace("f-1", $"f-{i}", StringComparison.Ordinal)).ToArray()),
            413, "text/plain"),

        // ---- POST /v1/events, FDSN event text (fdsnws-event 1.2, format=text) ----
        E("fdsn: extra pipes", "FDSN web services 1.2: 13 '|'-separated columns", Fdsn(FdsnGood + "|x|y"), 400, "text/plain"),
        E("fdsn: missing columns", "FDSN web services 1.2: 13 columns", Fdsn("f-1|2026-01-01T00:00:00|45.1|10.1"), 400, "text/plain"),
        E("fdsn: letter O in a latitude", "FDSN web services 1.2", Fdsn(FdsnGood.Replace("45.1", "4O.1", StringComparison.Ordinal)),
            400, "text/plain"),
        E("fdsn: NaN magnitude", "IEEE 754 NaN is not a magnitude", Fdsn(FdsnGood.Replace("|3.1|", "|NaN|", StringComparison.Ordinal)),
            400, "text/plain"),
        E("fdsn: time that is not a time", "FDSN web services 1.2 (ISO 8601 time)",
            Fdsn(FdsnGood.Replace("2026-01-01T00:00:00", "yesterday", StringComparison.Ordinal)), 400, "text/plain"),
        E("fdsn: header only", "API contract", FdsnHeader, 400, "text/plain"),
        E("fdsn: empty body", "API contract", "", 400, "text/plain"),
        E("fdsn: status=deleted parameter", "API contract: automatic or reviewed", Fdsn(FdsnGood), 400, "text/plain")
            with { Path = "/v1/events?status=deleted" },
        E("fdsn: path traversal in the event id", "RFC 3986 §3.3",
            Fdsn(FdsnGood.Replace("f-1|2026", "../../etc/passwd|2026", StringComparison.Ordinal)), 400, "text/plain"),
        EB("fdsn: NUL byte in the event id", "API contract: printable ids",
            () => Splice(Fdsn(FdsnGood.Replace("f-1|2026", "f@@1|2026", StringComparison.Ordinal)), 0x00), 400, "text/plain"),
        EB("fdsn: invalid UTF-8 in the event id", "RFC 3629 §3",
            () => Splice(Fdsn(FdsnGood.Replace("f-1|2026", "f@@1|2026", StringComparison.Ordinal)), 0xC3, 0x28), 400, "text/plain"),

        // ---- POST /v1/keys (admin) ----
        K("keys: missing name", "API contract", "{\"role\": \"feeder\"}"),
        K("keys: unknown role", "API contract", "{\"name\": \"x\", \"role\": \"superuser\"}"),
        K("keys: role in another case", "API contract", "{\"name\": \"x\", \"role\": \"Admin\"}"),
        K("keys: role is a number", "RFC 8259 §3", "{\"name\": \"x\", \"role\": 3}"),
        K("keys: SQL in the role", "OWASP A03 injection", "{\"name\": \"x\", \"role\": \"admin' --\"}"),
        K("keys: name with a control character", "API contract: printable names", "{\"name\": \"a\\u0007b\", \"role\": \"feeder\"}"),
        K("keys: name with a NUL", "API contract: printable names", "{\"name\": \"a\\u0000b\", \"role\": \"feeder\"}"),
        K("keys: name with a lone surrogate escape", "RFC 8259 §8.2 (unpaired surrogates), RFC 3629 §3",
            "{\"name\": \"a\\ud800b\", \"role\": \"feeder\"}"),
        K("keys: name of 101 characters", "API contract", $"{{\"name\": \"{new string('n', 101)}\", \"role\": \"feeder\"}}"),
        K("keys: caller-chosen secret as an extra field", "API contract: unknown fields are refused",
            "{\"name\": \"x\", \"role\": \"feeder\", \"key\": \"fk_chosen_by_the_caller_0123456789abcdef\"}"),
        K("keys: array instead of an object", "RFC 8259 §5", "[{\"name\": \"x\", \"role\": \"feeder\"}]"),
        K("keys: truncated JSON", "RFC 8259 §2", "{\"name\": \"x\", \"role\""),
        K("keys: empty body", "RFC 8259 §2", ""),
        K("keys: deeply nested name", "RFC 8259 §9", "{\"name\": " + Deep(200, "[", "1", "]") + ", \"role\": \"feeder\"}"),
        new("keys: invalid UTF-8 in the name", "RFC 3629 §3", CreateKey, "/v1/keys", "admin", Json,
            () => Splice("{\"name\": \"a@@\", \"role\": \"feeder\"}", 0xC3, 0x28), 400),
        K("keys: text/plain", "RFC 9110 §15.5.16", "{\"name\": \"x\", \"role\": \"feeder\"}", 415, "text/plain"),
        new("keys: body over the limit", "RFC 9110 §15.5.14", CreateKey, "/v1/keys", "admin", Json, () => OverLimit, 413),

        // ---- POST /v1/keys/{id}/revoke (admin) ----
        new("revoke: unknown key", "RFC 9110 §15.5.5 (404)", RevokeKey, "/v1/keys/999999/revoke", "admin", null, null, 404),
        new("revoke: negative id", "RFC 9110 §15.5.5", RevokeKey, "/v1/keys/-1/revoke", "admin", null, null, 404),
        new("revoke: id overflowing a long", "RFC 9110 §15.5.5", RevokeKey, "/v1/keys/99999999999999999999/revoke", "admin",
            null, null, 404),
        new("revoke: encoded path traversal", "RFC 3986 §3.3", RevokeKey, "/v1/keys/..%2F..%2Fv1%2Fkeys/revoke", "admin",
            null, null, 404),
        new("revoke: SQL in the id", "OWASP A03 injection", RevokeKey, "/v1/keys/1%20or%201%3D1/revoke", "admin", null, null, 404),

        // ---- POST /v1/sequences (analyst) ----
        D("declare: missing mainshock", "API contract", "{}"),
        D("declare: mainshock is a string", "RFC 8259 §3", "{\"mainshock\": \"corpus/main\"}"),
        D("declare: mainshock of an unknown event", "RFC 9110 §15.5.5", "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"nope\"}}", 404),
        D("declare: mainshock id with path traversal", "RFC 3986 §3.3",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"../../etc/passwd\"}}"),
        D("declare: mainshock id with a NUL", "API contract: printable ids",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"ma\\u0000in\"}}"),
        D("declare: SQL in the mainshock source", "OWASP A03 injection",
            "{\"mainshock\": {\"source\": \"corpus' or '1'='1\", \"id\": \"main\"}}"),
        D("declare: NaN zone multiple", "RFC 8259 §6", "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"zoneMultiple\": NaN}"),
        D("declare: NaN zone multiple as a string", "RFC 8259 §6",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"zoneMultiple\": \"NaN\"}"),
        D("declare: zone radius overflowing a double", "IEEE 754 binary64",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"zoneRadiusKm\": 1e999}"),
        D("declare: negative zone radius", "API contract", "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"zoneRadiusKm\": -5}"),
        D("declare: Mc of 11", "API contract: Mc -2..10", "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"mc\": 11}"),
        D("declare: SQL in the parameter set", "OWASP A03 injection",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"parameterSet\": \"x'; drop table sequence; --\"}"),
        D("declare: exercise is a string", "RFC 8259 §3", "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"exercise\": \"yes\"}"),
        D("declare: background rate without magnitude", "API contract",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"backgroundRatePerDay\": 0.1}"),
        D("declare: extra field", "API contract: unknown fields are refused",
            "{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"zoneRadius\": 50}"),
        D("declare: deeply nested mainshock", "RFC 8259 §9", "{\"mainshock\": " + Deep(200, "{\"a\":", "1", "}") + "}"),
        new("declare: invalid UTF-8 in the name", "RFC 3629 §3", Declare, "/v1/sequences", "analyst", Json,
            () => Splice("{\"mainshock\": {\"source\": \"corpus\", \"id\": \"main\"}, \"name\": \"x@@\"}", 0xFF), 400),
        D("declare: empty body", "RFC 8259 §2", ""),
        D("declare: XML body", "RFC 9110 §15.5.16", QuakeMl(QEvent()), 415, "application/xml"),
        new("declare: body over the limit", "RFC 9110 §15.5.14", Declare, "/v1/sequences", "analyst", Json, () => OverLimit, 413),

        // ---- PATCH /v1/sequences/{id} (analyst) ----
        P("edit: zone radius and clear together", "API contract", "{\"zoneRadiusKm\": 20, \"clearZoneRadius\": true}"),
        P("edit: Mc as a word", "RFC 8259 §6", "{\"mc\": \"ten\"}"),
        P("edit: negative foreshock days", "API contract", "{\"foreshockDays\": -1}"),
        P("edit: name with a control character", "API contract: printable names", "{\"name\": \"a\\u001bb\"}"),
        P("edit: name with a lone surrogate escape", "RFC 8259 §8.2, RFC 3629 §3", "{\"name\": \"x\\udc00\"}"),
        P("edit: name of 201 characters", "API contract", $"{{\"name\": \"{new string('n', 201)}\"}}"),
        P("edit: Infinity literal", "RFC 8259 §6", "{\"zoneFloorKm\": Infinity}"),
        P("edit: extra field", "API contract: unknown fields are refused", "{\"status\": \"closed\"}"),
        P("edit: body is null", "RFC 8259 §3", "null"),
        P("edit: unknown sequence", "RFC 9110 §15.5.5", "{\"name\": \"x\"}", 404, "/v1/sequences/999999"),
        P("edit: id is not a number", "RFC 9110 §15.5.5", "{\"name\": \"x\"}", 404, "/v1/sequences/abc"),
        P("edit: form encoding", "RFC 9110 §15.5.16", "name=x", 415, type: "application/x-www-form-urlencoded"),

        // ---- POST /v1/sequences/{id}/close (analyst) ----
        new("close: unknown sequence", "RFC 9110 §15.5.5", Close, "/v1/sequences/999999/close", "analyst", null, null, 404),
        new("close: encoded path traversal", "RFC 3986 §3.3", Close, "/v1/sequences/..%2F..%2Fv1%2Fkeys/close", "analyst",
            null, null, 404),
        new("close: id with a NUL", "RFC 3986 §2.1, RFC 9112 §3", Close, "/v1/sequences/{seq}%00/close", "analyst", null, null, 400)
            { ByKestrel = true },

        // ---- POST /v1/sequences/{id}/forecasts (analyst) ----
        C("compute: issue time as a word", "RFC 3339 §5.6", "{\"issueTime\": \"tomorrow\"}"),
        C("compute: issue time in the future", "API contract", "{\"issueTime\": \"2999-01-01T00:00:00Z\"}"),
        C("compute: issue time before the mainshock", "API contract", "{\"issueTime\": \"2000-01-01T00:00:00Z\"}"),
        C("compute: Mc of 99", "API contract: Mc -2..10", "{\"mc\": 99}"),
        C("compute: empty window list", "API contract", "{\"windowDays\": []}"),
        C("compute: 21 windows", "API contract", "{\"windowDays\": [" + string.Join(",", Enumerable.Repeat("1", 21)) + "]}"),
        C("compute: zero-length window", "API contract", "{\"windowDays\": [0]}"),
        C("compute: window as a string", "RFC 8259 §5", "{\"windowDays\": \"7\"}"),
        C("compute: threshold of 11", "API contract", "{\"thresholds\": [11]}"),
        C("compute: NaN threshold", "RFC 8259 §6", "{\"thresholds\": [NaN]}"),
        C("compute: SQL in the parameter set", "OWASP A03 injection", "{\"parameterSet\": \"rj1989-generic' --\"}"),
        C("compute: extra field", "API contract: unknown fields are refused", "{\"mc\": 2.0, \"seed\": 7}"),
        C("compute: array body", "RFC 8259 §5", "[]"),
        C("compute: unknown sequence", "RFC 9110 §15.5.5", "{}", 404, path: "/v1/sequences/999999/forecasts"),
        C("compute: text/plain", "RFC 9110 §15.5.16", "{}", 415, "text/plain"),

        // ---- POST /v1/sequences/{id}/forecasts/{n}/release (analyst) ----
        R("release: blank advisory", "API contract", "{\"advisoryText\": \"   \"}"),
        R("release: advisory over 20,000 characters", "API contract",
            "{\"advisoryText\": \"EXERCISE " + new string('a', 20_001) + "\"}"),
        R("release: advisory is a number", "RFC 8259 §3", "{\"advisoryText\": 5}"),
        R("release: exercise advisory without its marker", "API contract: drills stay marked",
            "{\"advisoryText\": \"A real-looking forecast.\"}"),
        R("release: advisory with a NUL", "API contract: printable text",
            "{\"advisoryText\": \"EXERCISE: a\\u0000b EXERCISE\"}"),
        R("release: advisory with a lone surrogate escape", "RFC 8259 §8.2, RFC 3629 §3",
            "{\"advisoryText\": \"EXERCISE \\ud83d EXERCISE\"}"),
        R("release: extra field", "API contract: unknown fields are refused", "{\"state\": \"released\"}"),
        R("release: unknown forecast", "RFC 9110 §15.5.5", "{}", 404, path: "/v1/sequences/{seq}/forecasts/9999/release"),
        R("release: number overflowing an int", "RFC 9110 §15.5.5", "{}", 404,
            path: "/v1/sequences/{seq}/forecasts/99999999999/release"),
        R("release: XML body", "RFC 9110 §15.5.16", "<advisoryText/>", 415, "application/xml"),

        // ---- POST /v1/sequences/{id}/forecasts/{n}/withdraw (analyst) ----
        W("withdraw: reason over 2,000 characters", "API contract", "{\"reason\": \"" + new string('r', 2001) + "\"}"),
        W("withdraw: reason with a NUL", "API contract: printable text", "{\"reason\": \"oops\\u0000\"}"),
        W("withdraw: reason is an object", "RFC 8259 §3", "{\"reason\": {\"why\": \"x\"}}"),
        W("withdraw: extra field", "API contract: unknown fields are refused", "{\"reason\": \"x\", \"number\": 1}"),
        W("withdraw: unknown forecast", "RFC 9110 §15.5.5", "{}", 404, path: "/v1/sequences/{seq}/forecasts/9999/withdraw"),
        W("withdraw: truncated JSON", "RFC 8259 §2", "{\"reason\": "),
    ];

    public static TheoryData<string> CaseNames() => new(Cases.Select(c => c.Name));

    HttpRequestMessage Build(Hostile c)
    {
        var path = c.Path.Replace("{seq}", api.SequenceId.ToString(System.Globalization.CultureInfo.InvariantCulture),
                StringComparison.Ordinal)
            .Replace("{draft}", api.DraftNumber.ToString(System.Globalization.CultureInfo.InvariantCulture), StringComparison.Ordinal);
        var method = new HttpMethod(c.Endpoint.Split(' ')[0]);
        var request = new HttpRequestMessage(method, path);
        if (c.Body is not null)
        {
            var bytes = c.Body();
            HttpContent content = c.Chunked ? new StreamContent(new UnknownLengthStream(bytes)) : new ByteArrayContent(bytes);
            if (c.ContentType is not null) content.Headers.TryAddWithoutValidation("Content-Type", c.ContentType);
            request.Content = content;
            // Over-limit bodies: let the server answer before the body is sent, as EventIngestTests does.
            if (c.Status == 413) request.Headers.ExpectContinue = true;
        }
        else if (c.ContentType is not null)
        {
            request.Content = new ByteArrayContent([]);
            request.Content.Headers.TryAddWithoutValidation("Content-Type", c.ContentType);
        }
        return request;
    }

    [Theory]
    [MemberData(nameof(CaseNames))]
    public async Task AHostileRequestIsAProblemStoresNothingAndLeavesTheServiceReady(string name)
    {
        var c = Cases.Single(x => x.Name == name);
        Assert.InRange(c.Status, 400, 499);
        var before = await StressChecks.FingerprintAsync(api.ConnectionString);

        using var client = api.Client(api.Keys[c.Role]);
        using var request = Build(c);
        var response = await client.SendAsync(request);
        if (c.ByKestrel) Assert.Equal(c.Status, (int)response.StatusCode);
        else await StressChecks.ProblemAsync(response, c.Status, $"{c.Name} ({c.Standard})");

        Assert.Equal(before, await StressChecks.FingerprintAsync(api.ConnectionString));
        await StressChecks.AssertReadyAsync(api, c.Name);
    }

    [Fact]
    public void TheCorpusHasAtLeastSixtyUniquelyNamedCasesEachNamingItsStandard()
    {
        Assert.True(Cases.Count >= 60, $"only {Cases.Count} cases");
        Assert.Equal(Cases.Count, Cases.Select(c => c.Name).Distinct().Count());
        Assert.All(Cases, c => Assert.False(string.IsNullOrWhiteSpace(c.Standard), c.Name));
    }

    [Fact]
    public void EveryWriteEndpointOfTheAppHasCorpusCases()
    {
        var writes = AccessMatrixTests.Routes(api.Services)
            .Where(r => r.Method is not ("GET" or "HEAD"))
            .Select(r => r.Key).ToHashSet();
        Assert.NotEmpty(writes);
        var covered = Cases.Select(c => c.Endpoint).ToHashSet();
        Assert.Empty(writes.Except(covered));   // a write endpoint without corpus cases
        Assert.Empty(covered.Except(writes));   // a case aimed at an endpoint that does not exist
        foreach (var w in writes)
            Assert.True(Cases.Count(c => c.Endpoint == w) >= 3, $"{w} has fewer than 3 cases");
    }

    [Fact]
    public async Task SqlLookingTextInAFreeTextFieldIsStoredLiterallyAndHarmsNothing()
    {
        // Event ids may hold quotes and semicolons (QuakeML publicIDs are free-form); with parameters they are data.
        const string id = "x');drop/**/table/**/event;--";
        using var feeder = api.Client(api.Keys["feeder"]);
        var post = await feeder.PostAsync("/v1/events",
            new StringContent(Ev(("id", JsonSerializer.Serialize(id)), ("time", "\"2025-06-01T00:00:00Z\""),
                ("latitude", "-45"), ("longitude", "-170")), Encoding.UTF8, Json));
        Assert.Equal(HttpStatusCode.Created, post.StatusCode);
        var got = await feeder.GetFromJsonAsync<JsonElement>(post.Headers.Location!.OriginalString);
        Assert.Equal(id, got.GetProperty("event").GetProperty("id").GetString());
        var page = await feeder.GetFromJsonAsync<JsonElement>("/v1/events?from=2025-06-01T00:00:00Z&to=2025-06-02T00:00:00Z");
        Assert.Equal(1, page.GetProperty("items").GetArrayLength());
        await StressChecks.AssertReadyAsync(api, "after SQL-looking id");
    }

    /// <summary>A stream that hides its length, so HttpClient sends it chunked.</summary>
    sealed class UnknownLengthStream(byte[] bytes) : MemoryStream(bytes)
    {
        public override bool CanSeek => false;
    }
}
