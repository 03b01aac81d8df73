using System.Net;
using System.Net.Http.Json;
using System.Text.Json;

namespace Forecast.Api.Tests.Sequences;

/// <summary>Declaring, reading, editing and closing sequences; zone, membership, takeover, automatic opening.</summary>
/// <remarks>Each test works at its own place (latitudes several degrees apart) so the zones of one test never
/// hold the events of another.</remarks>
public class SequenceTests(SequenceApiServer api) : IClassFixture<SequenceApiServer>
{
    static readonly DateTime T0 = DateTime.UtcNow.Date.AddDays(-5).AddHours(3);

    [Fact]
    public async Task DeclaringAMainshockAnswers201WithLocationAndDeclaringItAgainAnswers409WithTheSameLocation()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, Flow.Event("sq", "decl-1", T0, -40, 100, 4.2));

        var first = await analyst.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source = "sq", id = "decl-1" } });
        Assert.Equal(HttpStatusCode.Created, first.StatusCode);
        var body = await first.Content.ReadFromJsonAsync<JsonElement>();
        var id = body.GetProperty("id").GetInt64();
        Assert.Equal($"/v1/sequences/{id}", first.Headers.Location!.OriginalString);
        Assert.False(body.GetProperty("automatic").GetBoolean());
        Assert.Equal("active", body.GetProperty("status").GetString());

        var again = await analyst.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source = "sq", id = "decl-1" } });
        Assert.Equal(HttpStatusCode.Conflict, again.StatusCode);
        Assert.Equal("application/problem+json", again.Content.Headers.ContentType!.MediaType);
        Assert.Equal($"/v1/sequences/{id}", again.Headers.Location!.OriginalString);
    }

    [Fact]
    public async Task BadDeclarationsAreRefusedAndStoreNothing()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, Flow.Event("sq", "bad-1", T0, -30, 100, 4.5));
        var before = (await analyst.GetFromJsonAsync<JsonElement>("/v1/sequences")).GetArrayLength();

        var unknown = await analyst.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source = "sq", id = "nope" } });
        Assert.Equal(HttpStatusCode.NotFound, unknown.StatusCode);
        var invalid = await analyst.PostAsJsonAsync("/v1/sequences",
            new { mainshock = new { source = "sq", id = "bad-1" }, zoneMultiple = -1, parameterSet = "no-such-set", mc = 11 });
        Assert.Equal(HttpStatusCode.BadRequest, invalid.StatusCode);
        var problem = await invalid.Content.ReadFromJsonAsync<JsonElement>();
        var fields = problem.GetProperty("errors").EnumerateObject().Select(p => p.Name).Order().ToArray();
        Assert.Equal(["mc", "parameterSet", "zoneMultiple"], fields);
        var feederTry = await feeder.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source = "sq", id = "bad-1" } });
        Assert.Equal(HttpStatusCode.Forbidden, feederTry.StatusCode);
        using var anonymous = api.Client();
        Assert.Equal(HttpStatusCode.Unauthorized, (await anonymous.GetAsync("/v1/sequences")).StatusCode);

        Assert.Equal(before, (await analyst.GetFromJsonAsync<JsonElement>("/v1/sequences")).GetArrayLength());
    }

    [Fact]
    public async Task TheZoneRadiusFollowsWellsAndCoppersmithWithAFloorAndCanBeOverridden()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, new[]
        {
            Flow.Event("sq", "zone-7", T0, -20, 100, 4.9), Flow.Event("sq", "zone-4", T0, -20, 120, 4.0),
        });
        // M 4.9: 10^(-2.44 + 0.59 * 4.9) = 10^0.451 = 2.82 km (Wells & Coppersmith 1994, all slip types), so the
        // 10 km floor applies; twice that with a 25 km floor gives the floor again; a fixed radius wins over both.
        var a = await Flow.DeclareAsync(analyst, "sq", "zone-7");
        var zone = (await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{a}")).GetProperty("zone");
        Assert.Equal(10.0, zone.GetProperty("radiusKm").GetDouble(), 9);
        var b = await Flow.DeclareAsync(analyst, "sq", "zone-4", new { zoneRadiusKm = 42.5 });
        Assert.Equal(42.5, (await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{b}")).GetProperty("zone")
            .GetProperty("radiusKm").GetDouble());

        // Multiple 5: 5 * 2.825 = 14.1 km, above the floor.
        var edit = await analyst.PatchAsJsonAsync($"/v1/sequences/{a}", new { zoneMultiple = 5.0 });
        Assert.Equal(HttpStatusCode.OK, edit.StatusCode);
        var edited = (await edit.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("zone");
        Assert.Equal(5 * Math.Pow(10, -2.44 + 0.59 * 4.9), edited.GetProperty("radiusKm").GetDouble(), 9);
    }

    [Fact]
    public async Task MembershipListsAftershocksInTheZoneAndForeshocksWithinTheForeshockWindow()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        // M 4.6 mainshock at 10 S 100 E: zone radius 10 km (the floor). 0.05 degrees of latitude is 5.6 km.
        await Flow.PostAsync(feeder, new[]
        {
            Flow.Event("sq", "mem-main", T0, -10, 100, 4.6),
            Flow.Event("sq", "mem-fore", T0.AddDays(-2), -10.05, 100, 3.0),
            Flow.Event("sq", "mem-old", T0.AddDays(-30), -10.05, 100, 3.0),
            Flow.Event("sq", "mem-after", T0.AddHours(2), -9.95, 100, 3.1),
            Flow.Event("sq", "mem-far", T0.AddHours(3), -10.5, 100, 3.1),
        });
        var id = await Flow.DeclareAsync(analyst, "sq", "mem-main", new { foreshockDays = 7.0 });
        var m = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/events");
        Assert.Equal("mem-main", m.GetProperty("mainshock").GetProperty("id").GetString());
        Assert.Equal(["mem-fore"], m.GetProperty("foreshocks").EnumerateArray().Select(e => e.GetProperty("id").GetString()!));
        Assert.Equal(["mem-after"], m.GetProperty("aftershocks").EnumerateArray().Select(e => e.GetProperty("id").GetString()!));
    }

    [Fact]
    public async Task ALargerEventInTheZoneTakesOverAsMainshockAndTheChangeIsRecorded()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, Flow.Event("sq", "to-first", T0, 0, 100, 4.8));
        var id = await Flow.DeclareAsync(analyst, "sq", "to-first");
        await Flow.LatestAsync(analyst, id, _ => true);

        var before = DateTime.UtcNow.AddSeconds(-1);
        await Flow.PostAsync(feeder, Flow.Event("sq", "to-bigger", T0.AddHours(6), 0.03, 100.02, 4.95));
        var s = await Flow.SequenceAsync(analyst, id, s => s.GetProperty("mainshock").GetProperty("id").GetString() == "to-bigger");
        var change = Assert.Single(s.GetProperty("mainshockChanges").EnumerateArray());
        Assert.Equal("to-first", change.GetProperty("from").GetProperty("id").GetString());
        Assert.Equal(4.95, change.GetProperty("toMagnitude").GetDouble());
        Assert.True(change.GetProperty("changedAt").GetDateTime() >= before);

        var m = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/events");
        Assert.Contains("to-first", m.GetProperty("foreshocks").EnumerateArray().Select(e => e.GetProperty("id").GetString()));
        var f = await Flow.LatestAsync(analyst, id, f => f.GetProperty("mainshockMagnitude").GetDouble() == 4.95);
        Assert.Equal("sq/to-bigger", f.GetProperty("result").GetProperty("mainshockId").GetString());
    }

    [Fact]
    public async Task AnEventAtTheTriggerMagnitudeOutsideEveryZoneOpensASequenceAndOneInsideDoesNot()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        // Default trigger: M 5.0. M 5.4 opens a sequence (zone radius: the 10 km floor, since
        // 10^(-2.44 + 0.59 * 5.4) = 5.6 km); the M 5.1 3 km away is inside that zone and does not.
        await Flow.PostAsync(feeder, Flow.Event("sq", "auto-1", T0, 20, 100, 5.4));
        var deadline = DateTime.UtcNow.AddSeconds(60);
        JsonElement opened = default;
        while (DateTime.UtcNow < deadline)
        {
            var list = await analyst.GetFromJsonAsync<JsonElement>("/v1/sequences");
            opened = list.EnumerateArray().FirstOrDefault(s => s.GetProperty("mainshock").GetProperty("id").GetString() == "auto-1");
            if (opened.ValueKind == JsonValueKind.Object) break;
            await Task.Delay(100);
        }
        Assert.Equal(JsonValueKind.Object, opened.ValueKind);
        Assert.True(opened.GetProperty("automatic").GetBoolean());
        var id = opened.GetProperty("id").GetInt64();

        await Flow.PostAsync(feeder, new[]
        {
            Flow.Event("sq", "auto-inside", T0.AddHours(1), 20.03, 100, 5.1),
            Flow.Event("sq", "auto-small", T0.AddHours(1), 25, 100, 4.9),
        });
        // The refit the inside event queued includes it; by then the candidate has been handled too.
        await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == 2);
        var all = await analyst.GetFromJsonAsync<JsonElement>("/v1/sequences");
        var mainshocks = all.EnumerateArray().Select(s => s.GetProperty("mainshock").GetProperty("id").GetString()).ToList();
        Assert.DoesNotContain("auto-inside", mainshocks);
        Assert.DoesNotContain("auto-small", mainshocks);
    }

    [Fact]
    public async Task AClosedSequenceCannotBeEditedOrClosedAgain()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        await Flow.PostAsync(feeder, Flow.Event("sq", "close-1", T0, 40, 100, 4.0));
        var id = await Flow.DeclareAsync(analyst, "sq", "close-1");
        var close = await analyst.PostAsync($"/v1/sequences/{id}/close", null);
        Assert.Equal(HttpStatusCode.OK, close.StatusCode);
        Assert.Equal("closed", (await close.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("status").GetString());
        Assert.Equal(HttpStatusCode.Conflict, (await analyst.PostAsync($"/v1/sequences/{id}/close", null)).StatusCode);
        Assert.Equal(HttpStatusCode.Conflict, (await analyst.PatchAsJsonAsync($"/v1/sequences/{id}", new { name = "x" })).StatusCode);
        var active = await analyst.GetFromJsonAsync<JsonElement>("/v1/sequences?status=active");
        Assert.DoesNotContain(id, active.EnumerateArray().Select(s => s.GetProperty("id").GetInt64()));
    }
}
