using System.Net;
using System.Net.Http.Json;
using System.Text.Json;
using Forecast.Api.Tests.Sequences;
using Forecast.Core;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;
using Forecast.Core.Zone;

namespace Forecast.Api.Tests.Forecasts;

/// <summary>The living forecast: events posted through the API move it; revisions and retractions refit it.</summary>
public class ForecastFlowTests(SequenceApiServer api) : IClassFixture<SequenceApiServer>
{
    static readonly DateTime Now = DateTime.UtcNow;

    static IReadOnlyList<CatalogEvent> Simulate(int seed, RjParameters truth, double mainshockMagnitude, double mc,
        DateTime origin, double days, double lat, double lon) =>
        new SequenceSimulator(seed).Simulate(
            SimulatedSequenceSpec.FromReasenbergJones(truth, mainshockMagnitude, mc, origin, 0, days) with
            {
                Latitude = lat, Longitude = lon, ScatterKm = 2,
            });

    static object[] AsEvents(IEnumerable<CatalogEvent> events, string source) => events
        .Select(e => Flow.Event(source, e.Id, e.TimeUtc, e.Latitude, e.Longitude, e.Magnitude, depthKm: e.DepthKm))
        .ToArray();

    static List<CatalogEvent> Members(IReadOnlyList<CatalogEvent> events) =>
        events.Where(e => AftershockZone.Contains(events[0].Latitude, events[0].Longitude,
            AftershockZone.RadiusKm(events[0].Magnitude), e.Latitude, e.Longitude)).ToList();

    static int InZone(IReadOnlyList<CatalogEvent> events) => Members(events).Count;

    static double Posterior(JsonElement f, string name) => f.GetProperty("result").GetProperty("posterior").GetProperty(name).GetDouble();

    [Fact]
    public async Task PostingASequenceInTimeOrderMovesTheForecastFromTheGenericPriorTowardsTheSequence()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        // A sequence far more productive than the generic California one (a = -1.2 against -1.67 of Reasenberg &
        // Jones 1989, from memory), seeded, M 6.0 ten days ago: about 350 events of M >= 3.
        var origin = Now.AddDays(-10);
        var truth = new RjParameters(A: -1.2, B: 1.0, P: 1.1, C: 0.05);
        var catalog = Simulate(seed: 4, truth, 6.0, 3.0, origin, 9.9, lat: -50, lon: -150);
        var events = AsEvents(catalog, "sim");
        await Flow.PostAsync(feeder, events[0]);
        // M 6 is above the trigger magnitude: the worker may open the sequence before the analyst declares it.
        var id = await Flow.DeclareOrFindAsync(analyst, "sim", catalog[0].Id);

        // Issued one minute after the mainshock, before any aftershock: the fit window is empty, so the posterior
        // is the prior.
        var first = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts",
            new { issueTime = origin.AddMinutes(1).ToString("O") });
        Assert.Equal(HttpStatusCode.Created, first.StatusCode);
        var prior = await first.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal(-1.67, Posterior(prior, "a"), 0.02);

        foreach (var chunk in events.Skip(1).Chunk(70)) await Flow.PostAsync(feeder, chunk);
        var expected = InZone(catalog);
        var last = await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == expected);

        var aPrior = Posterior(prior, "a");
        var aLast = Posterior(last, "a");
        Assert.True(Math.Abs(aLast - truth.A) < Math.Abs(aPrior - truth.A) / 2,
            $"posterior a {aLast:0.000} should be near the simulated {truth.A}, not the prior's {aPrior:0.000}");
        Assert.True(Posterior(last, "sdA") < Posterior(prior, "sdA"), "the data should narrow the posterior");
        Assert.Equal("event", last.GetProperty("reason").GetString());
        Assert.Equal(Members(catalog).Max(e => e.TimeUtc), last.GetProperty("input").GetProperty("lastEventTime").GetDateTime(),
            TimeSpan.FromMilliseconds(1));
    }

    [Fact]
    public async Task AMagnitudeRevisionAndARetractionEachTriggerARefitThatChangesTheNumbers()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        var origin = Now.AddDays(-3);
        var catalog = Simulate(seed: 11, GenericParameterSets.ReasenbergJones1989.Mean, 5.6, 2.5, origin, 2.9, lat: 50, lon: -150);
        var events = AsEvents(catalog, "rev");
        await Flow.PostAsync(feeder, events);
        var id = await Flow.DeclareOrFindAsync(analyst, "rev", catalog[0].Id);
        var n = InZone(catalog);
        var initial = await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == n);

        // A fixed issue time isolates the effect of the catalog change from the passing of time.
        var issue = new { issueTime = catalog.Max(e => e.TimeUtc).AddHours(1).ToString("O") };
        var before = await ComputeAsync(analyst, id, issue);

        // An event well inside the fit window (which starts minutes after the mainshock, Helmstetter et al. 2006).
        var revisedEvent = catalog.Skip(1).First(e => e.Magnitude < 4 && e.TimeUtc > origin.AddDays(1));
        await Flow.PostAsync(feeder, Flow.Event("rev", revisedEvent.Id, revisedEvent.TimeUtc, revisedEvent.Latitude,
            revisedEvent.Longitude, revisedEvent.Magnitude + 1.2, depthKm: revisedEvent.DepthKm));
        var afterRevision = await Flow.LatestAsync(analyst, id, f =>
            Flow.Hash(f) != Flow.Hash(initial) && Flow.EventCount(f) == n && f.GetProperty("reason").GetString() == "event");
        var revised = await ComputeAsync(analyst, id, issue);
        Assert.Equal(Flow.Hash(afterRevision), Flow.Hash(revised));
        Assert.NotEqual(Posterior(before, "b"), Posterior(revised, "b"));
        Assert.NotEqual(Flow.Cell(before, 7, 5).GetProperty("probability").GetDouble(),
            Flow.Cell(revised, 7, 5).GetProperty("probability").GetDouble());

        var retracted = catalog.Skip(1).Last(e => e.Magnitude < 4 && e.Id != revisedEvent.Id);
        await Flow.PostAsync(feeder, Flow.Event("rev", retracted.Id, retracted.TimeUtc, retracted.Latitude,
            retracted.Longitude, retracted.Magnitude, status: "deleted", depthKm: retracted.DepthKm));
        await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == n - 1 && f.GetProperty("reason").GetString() == "event");
        var afterRetraction = await ComputeAsync(analyst, id, issue);
        Assert.Equal(n - 1, Flow.EventCount(afterRetraction));
        Assert.NotEqual(Posterior(revised, "a"), Posterior(afterRetraction, "a"));
        Assert.NotEqual(Flow.Cell(revised, 7, 3).GetProperty("expectedNumber").GetDouble(),
            Flow.Cell(afterRetraction, 7, 3).GetProperty("expectedNumber").GetDouble());
    }

    [Fact]
    public async Task AFailedFitIsStoredOnTheSequenceAndTheNextEventRetries()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        var t0 = Now.AddDays(-1);
        await Flow.PostAsync(feeder, Flow.Event("fail", "main", t0, 60, 30, 4.5));
        var id = await Flow.DeclareAsync(analyst, "fail", "main");
        await Flow.LatestAsync(analyst, id, _ => true);

        // Retracting the mainshock makes the sequence unfittable; the worker records why and carries on.
        await Flow.PostAsync(feeder, Flow.Event("fail", "main", t0, 60, 30, 4.5, status: "deleted"));
        var failed = await Flow.SequenceAsync(analyst, id, s => s.GetProperty("lastError").ValueKind == JsonValueKind.String);
        Assert.Contains("retracted", failed.GetProperty("lastError").GetString());

        // Reinstated: the event is accepted again, the refit it queues succeeds and clears the error (the catalog
        // is what the first forecast saw, so no new forecast is needed); the next aftershock gives a new one.
        await Flow.PostAsync(feeder, Flow.Event("fail", "main", t0, 60, 30, 4.5, status: "reviewed"));
        await Flow.SequenceAsync(analyst, id, s => s.GetProperty("lastError").ValueKind == JsonValueKind.Null);
        await Flow.PostAsync(feeder, Flow.Event("fail", "after-1", t0.AddHours(1), 60.01, 30, 3.0));
        var f = await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == 2);
        Assert.Equal("event", f.GetProperty("reason").GetString());
    }

    [Fact]
    public async Task ComputeNowRefusesBadOptionsAndStoresNothing()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        var t0 = Now.AddDays(-1);
        await Flow.PostAsync(feeder, Flow.Event("opt", "main", t0, 70, 30, 4.5));
        var id = await Flow.DeclareAsync(analyst, "opt", "main", new { exercise = true });
        await Flow.LatestAsync(analyst, id, _ => true);
        var count = (await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/forecasts")).GetArrayLength();

        var bad = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts",
            new { mc = 12.0, windowDays = new[] { -1.0 }, parameterSet = "none" });
        Assert.Equal(HttpStatusCode.BadRequest, bad.StatusCode);
        var beforeMainshock = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts",
            new { issueTime = t0.AddDays(-1).ToString("O") });
        Assert.Equal(HttpStatusCode.BadRequest, beforeMainshock.StatusCode);
        using var feederOnly = feeder;
        Assert.Equal(HttpStatusCode.Forbidden, (await feederOnly.PostAsJsonAsync($"/v1/sequences/{id}/forecasts", new { })).StatusCode);
        Assert.Equal(count, (await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/forecasts")).GetArrayLength());

        var good = await ComputeAsync(analyst, id, new { windowDays = new[] { 2.0 }, thresholds = new[] { 4.0 } });
        var cell = Assert.Single(good.GetProperty("result").GetProperty("table").EnumerateArray());
        Assert.Equal(4.0, cell.GetProperty("minMagnitude").GetDouble());
        Assert.Equal("manual", good.GetProperty("reason").GetString());
        Assert.True(good.GetProperty("exercise").GetBoolean());
    }

    [Fact]
    public async Task TheZonesCatalogHistoryGivesTheBackgroundProbabilityAndTheGain()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        var t0 = Now.AddDays(-1);
        // 24 M 3.2 events 70 days apart in the zone before the sequence: Gardner & Knopoff (1974) windows for
        // M 3.2 are 10^(0.5409 * 3.2 - 0.547) = 15 days, so all are independent.
        var history = Enumerable.Range(1, 24)
            .Select(i => Flow.Event("bg", $"old-{i}", t0.AddDays(-30 - 70 * i), -70, -100, 3.2)).ToArray();
        await Flow.PostAsync(feeder, history);
        await Flow.PostAsync(feeder, Flow.Event("bg", "main", t0, -70, -100, 4.7));
        var id = await Flow.DeclareAsync(analyst, "bg", "main");
        var f = await Flow.LatestAsync(analyst, id, _ => true);

        // The history ends at the foreshock window (7 days before the mainshock) and spans 10 years counted in
        // whole 30-day windows: 121 windows of 30 days. Rate 24 / 3630 per day; P(7 d) = 1 - exp(-7 rate).
        var rate = 24.0 / (121 * 30);
        var cell = Flow.Cell(f, 7, 3);
        Assert.Equal(1 - Math.Exp(-7 * rate), cell.GetProperty("backgroundProbability").GetDouble(), 1e-9);
        Assert.Equal(cell.GetProperty("probability").GetDouble() / cell.GetProperty("backgroundProbability").GetDouble(),
            cell.GetProperty("gain").GetDouble(), 1e-9);
        Assert.Contains("the usual chance here", f.GetProperty("advisory").GetProperty("text").GetString());
    }

    static async Task<JsonElement> ComputeAsync(HttpClient analyst, long id, object body)
    {
        var r = await analyst.PostAsJsonAsync($"/v1/sequences/{id}/forecasts", body);
        Assert.True(r.StatusCode == HttpStatusCode.Created, await r.Content.ReadAsStringAsync());
        Assert.NotNull(r.Headers.Location);
        return await r.Content.ReadFromJsonAsync<JsonElement>();
    }
}
