using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;
using Forecast.Api.Tests.Sequences;
using Forecast.Core.Advisory;

namespace Forecast.Api.Tests.Public;

/// <summary>Review and release, conditional GETs, and what the public may see.</summary>
public class PublicForecastTests(SequenceApiServer api) : IClassFixture<SequenceApiServer>
{
    static readonly DateTime T0 = DateTime.UtcNow.AddDays(-2);

    async Task<(HttpClient Analyst, long Id)> SequenceWithForecastAsync(string source, double lat, bool exercise = false)
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, new[]
        {
            Flow.Event(source, "main", T0, lat, 60, 4.8),
            Flow.Event(source, "a1", T0.AddHours(2), lat + 0.01, 60, 3.2),
        });
        var id = await Flow.DeclareAsync(analyst, source, "main", new { exercise, name = $"Test sequence {source}" });
        await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == 2);
        return (analyst, id);
    }

    [Fact]
    public async Task TheLatestForecastAnswers304ToAMatchingIfNoneMatchAnd200OnceItsStateChanges()
    {
        var (analyst, id) = await SequenceWithForecastAsync("etag", -60);
        using var _ = analyst;
        var first = await analyst.GetAsync($"/v1/sequences/{id}/forecasts/latest");
        Assert.Equal(HttpStatusCode.OK, first.StatusCode);
        var etag = first.Headers.ETag!;
        Assert.NotNull(first.Content.Headers.LastModified);

        using var conditional = new HttpRequestMessage(HttpMethod.Get, $"/v1/sequences/{id}/forecasts/latest");
        conditional.Headers.IfNoneMatch.Add(etag);
        var notModified = await analyst.SendAsync(conditional);
        Assert.Equal(HttpStatusCode.NotModified, notModified.StatusCode);
        Assert.Equal(etag, notModified.Headers.ETag);
        Assert.Empty(await notModified.Content.ReadAsByteArrayAsync());

        var number = (await first.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32();
        Assert.Equal(HttpStatusCode.OK, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{number}/release", null)).StatusCode);
        using var again = new HttpRequestMessage(HttpMethod.Get, $"/v1/sequences/{id}/forecasts/latest");
        again.Headers.IfNoneMatch.Add(etag);
        var changed = await analyst.SendAsync(again);
        Assert.Equal(HttpStatusCode.OK, changed.StatusCode);
        Assert.NotEqual(etag, changed.Headers.ETag);
    }

    [Fact]
    public async Task DraftsAndWithdrawnForecastsNeverAppearPublicly()
    {
        var (analyst, id) = await SequenceWithForecastAsync("pub", -55);
        using var _ = analyst;
        using var anonymous = api.Client();
        Assert.Equal(HttpStatusCode.NotFound, (await anonymous.GetAsync($"/v1/public/sequences/{id}/forecast")).StatusCode);
        Assert.Empty((await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecasts")).EnumerateArray());
        Assert.DoesNotContain(id, (await anonymous.GetFromJsonAsync<JsonElement>("/v1/public/sequences")).EnumerateArray()
            .Select(s => s.GetProperty("id").GetInt64()));

        var draft = await Flow.LatestAsync(analyst, id, _ => true);
        var n = draft.GetProperty("number").GetInt32();
        Assert.Equal(HttpStatusCode.OK, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{n}/release", null)).StatusCode);
        var released = await anonymous.GetAsync($"/v1/public/sequences/{id}/forecast");
        Assert.Equal(HttpStatusCode.OK, released.StatusCode);
        Assert.True(released.Headers.CacheControl!.Public);
        Assert.Equal(TimeSpan.FromSeconds(60), released.Headers.CacheControl.MaxAge);
        Assert.Equal(n, (await released.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32());

        // A newer draft does not replace the released forecast in public.
        var newer = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts", new { });
        var newerNumber = (await newer.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32();
        Assert.Equal(n, (await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecast")).GetProperty("number").GetInt32());
        Assert.DoesNotContain(newerNumber, (await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecasts"))
            .EnumerateArray().Select(f => f.GetProperty("number").GetInt32()));

        var withdraw = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts/{n}/withdraw", new { reason = "wrong Mc" });
        Assert.Equal(HttpStatusCode.OK, withdraw.StatusCode);
        Assert.Equal(HttpStatusCode.NotFound, (await anonymous.GetAsync($"/v1/public/sequences/{id}/forecast")).StatusCode);
        Assert.Empty((await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecasts")).EnumerateArray());
        Assert.Equal(HttpStatusCode.Conflict, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{n}/withdraw", null)).StatusCode);
        Assert.Equal(HttpStatusCode.Conflict, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{n}/release", null)).StatusCode);
    }

    [Fact]
    public async Task ReleasingANewerForecastSupersedesTheOlderAndAnEditedAdvisoryIsKeptBesideTheGeneratedOne()
    {
        var (analyst, id) = await SequenceWithForecastAsync("rel", -50);
        using var _ = analyst;
        var one = (await Flow.LatestAsync(analyst, id, _ => true)).GetProperty("number").GetInt32();
        await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{one}/release", null);
        var draft = await (await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts", new { }))
            .Content.ReadFromJsonAsync<JsonElement>();
        var two = draft.GetProperty("number").GetInt32();
        var generated = draft.GetProperty("advisory").GetProperty("text").GetString()!;

        // An edit that drops the numbers is refused, naming each statement it left out, and changes nothing.
        var bare = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts/{two}/release",
            new { advisoryText = "Edited by the duty seismologist. " + AdvisoryBuilder.Cautions("the Test Seismic Service")[0] });
        var refused = await bare.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal(HttpStatusCode.BadRequest, bare.StatusCode);
        var reasons = refused.GetProperty("errors").GetProperty("advisoryText").EnumerateArray().Select(e => e.GetString()!).ToList();
        Assert.Equal(generated.Split('\n').Count(l => l.StartsWith("- ", StringComparison.Ordinal)) + 3, reasons.Count);
        Assert.All(reasons, r => Assert.StartsWith("must keep, word for word, ", r));
        Assert.Equal("draft", (await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/forecasts/{two}"))
            .GetProperty("state").GetString());

        var edited = "Edited by the duty seismologist: the sequence is decaying as expected.\n\n" + generated;
        var release = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts/{two}/release", new { advisoryText = edited });
        Assert.Equal(HttpStatusCode.OK, release.StatusCode);
        var advisory = (await release.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("advisory");
        Assert.Equal(edited, advisory.GetProperty("text").GetString());
        Assert.True(advisory.GetProperty("edited").GetBoolean());
        Assert.Contains("%", advisory.GetProperty("generatedText").GetString());

        var history = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/forecasts");
        var states = history.EnumerateArray().ToDictionary(f => f.GetProperty("number").GetInt32(), f => f.GetProperty("state").GetString());
        Assert.Equal("superseded", states[one]);
        Assert.Equal("released", states[two]);
        using var anonymous = api.Client();
        Assert.Equal(edited, (await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecast"))
            .GetProperty("advisory").GetString());
        // An older draft cannot be released over a newer released forecast.
        var drafts = history.EnumerateArray().Where(f => f.GetProperty("state").GetString() == "draft")
            .Select(f => f.GetProperty("number").GetInt32()).Where(k => k < two).ToList();
        foreach (var k in drafts)
            Assert.Equal(HttpStatusCode.Conflict, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{k}/release", null)).StatusCode);
    }

    [Fact]
    public async Task EveryAdvisoryCarriesTheCautionsTheAgencyAndItsNumbersAndADrillIsMarkedEverywhere()
    {
        var (analyst, id) = await SequenceWithForecastAsync("drill", -45, exercise: true);
        using var _ = analyst;
        var f = await Flow.LatestAsync(analyst, id, _ => true);
        var text = f.GetProperty("advisory").GetProperty("text").GetString()!;
        foreach (var caution in AdvisoryBuilder.Cautions("the Test Seismic Service")) Assert.Contains(caution, text);
        Assert.Matches(@"(unlikely|likely|certain|as likely as not) \((less than )?[0-9.]+ %\)", text);
        Assert.StartsWith(AdvisoryBuilder.ExerciseMarker, text);
        Assert.Contains(AdvisoryBuilder.ExerciseMarker, f.GetProperty("notice").GetString());
        var s = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}");
        Assert.Contains(AdvisoryBuilder.ExerciseMarker, s.GetProperty("notice").GetString());

        // A release may not strip the marker from a drill.
        var n = f.GetProperty("number").GetInt32();
        var stripped = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts/{n}/release", new { advisoryText = "All clear." });
        Assert.Equal(HttpStatusCode.BadRequest, stripped.StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{n}/release", null)).StatusCode);
        using var anonymous = api.Client();
        var pub = await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecast");
        Assert.StartsWith("EXERCISE", pub.GetProperty("title").GetString());
        Assert.StartsWith(AdvisoryBuilder.ExerciseMarker, pub.GetProperty("advisory").GetString());
    }

    [Fact]
    public async Task PublicReadsAllowOtherOriginsButTheAuthenticatedApiDoesNot()
    {
        using var client = api.Client();
        using var request = new HttpRequestMessage(HttpMethod.Get, "/v1/public/sequences");
        request.Headers.Add("Origin", "https://dashboard.example");
        var r = await client.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, r.StatusCode);
        Assert.Equal("*", r.Headers.GetValues("Access-Control-Allow-Origin").Single());

        using var preflight = new HttpRequestMessage(HttpMethod.Options, "/v1/public/sequences");
        preflight.Headers.Add("Origin", "https://dashboard.example");
        preflight.Headers.Add("Access-Control-Request-Method", "POST");
        var p = await client.SendAsync(preflight);
        Assert.False(p.Headers.TryGetValues("Access-Control-Allow-Methods", out var methods) && methods.Any(m => m.Contains("POST")));

        using var key = api.Client(await api.NewKeyAsync("analyst"));
        using var authed = new HttpRequestMessage(HttpMethod.Get, "/v1/sequences");
        authed.Headers.Add("Origin", "https://dashboard.example");
        var a = await key.SendAsync(authed);
        Assert.Equal(HttpStatusCode.OK, a.StatusCode);
        Assert.False(a.Headers.Contains("Access-Control-Allow-Origin"));
    }
}

/// <summary>A server whose public API allows three requests a minute per address.</summary>
public sealed class RateLimitedApiServer : SequenceApiServer
{
    protected override IReadOnlyDictionary<string, string> ExtraSettings => new Dictionary<string, string>
    {
        ["PublicApi:PermitLimit"] = "3",
        ["PublicApi:Window"] = "00:01:00",
    };
}

public class PublicRateLimitTests(RateLimitedApiServer api) : IClassFixture<RateLimitedApiServer>
{
    [Fact]
    public async Task TooManyPublicRequestsAnswer429WithRetryAfterAsProblemDetails()
    {
        using var client = api.Client();
        for (var i = 0; i < 3; i++) Assert.Equal(HttpStatusCode.OK, (await client.GetAsync("/v1/public/sequences")).StatusCode);
        var limited = await client.GetAsync("/v1/public/sequences");
        Assert.Equal(HttpStatusCode.TooManyRequests, limited.StatusCode);
        Assert.True(limited.Headers.RetryAfter!.Delta > TimeSpan.Zero);
        Assert.Equal("application/problem+json", limited.Content.Headers.ContentType!.MediaType);
        var problem = await limited.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal("urn:forecast:problem:rate-limited", problem.GetProperty("type").GetString());

        // The limit is the public API's only: authenticated reads and health go on.
        using var key = api.Client(await api.NewKeyAsync("analyst"));
        Assert.Equal(HttpStatusCode.OK, (await key.GetAsync("/v1/sequences")).StatusCode);
    }
}
