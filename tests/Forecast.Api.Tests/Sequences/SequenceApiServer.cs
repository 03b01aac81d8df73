using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;
using Forecast.Tests.Shared;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;

namespace Forecast.Api.Tests.Sequences;

/// <summary>Like <see cref="ApiServer"/>, with a refit worker that polls every 50 ms (so tests wait for forecasts
/// briefly) and no Mc bootstrap (the engine's slowest optional step), plus any settings a subclass adds.</summary>
public class SequenceApiServer : ApiServer
{
    protected override IReadOnlyDictionary<string, string> Settings => new Dictionary<string, string>
    {
        ["RefitWorker:PollInterval"] = "00:00:00.050",
        ["Forecasts:BootstrapSamples"] = "0",
        ["Forecasts:AgencyName"] = "the Test Seismic Service",
    }.Concat(ExtraSettings).ToDictionary(kv => kv.Key, kv => kv.Value);

    /// <summary>Settings a subclass adds.</summary>
    protected virtual IReadOnlyDictionary<string, string> ExtraSettings => new Dictionary<string, string>();
}

/// <summary>Posting events and waiting for the worker's forecasts.</summary>
public static class Flow
{
    /// <summary>Generous: a wait, not a timing assertion; it only bounds a test that would otherwise hang.</summary>
    static readonly TimeSpan WaitLimit = TimeSpan.FromSeconds(90);

    public static object Event(string source, string id, DateTime time, double lat, double lon, double magnitude,
        string status = "reviewed", double depthKm = 10) => new
    {
        id, source, time = time.ToString("yyyy-MM-ddTHH:mm:ss.ffffffZ", System.Globalization.CultureInfo.InvariantCulture),
        latitude = lat, longitude = lon, depthKm, magnitude, magnitudeType = "Mw", status,
    };

    public static async Task PostAsync(HttpClient feeder, object eventOrArray)
    {
        var r = await feeder.PostAsJsonAsync("/v1/events", eventOrArray);
        Assert.True(r.IsSuccessStatusCode, $"POST /v1/events answered {(int)r.StatusCode}: {await r.Content.ReadAsStringAsync()}");
    }

    public static async Task<long> DeclareAsync(HttpClient analyst, string source, string id, object? extra = null)
    {
        var body = new Dictionary<string, object?> { ["mainshock"] = new { source, id } };
        if (extra is not null)
            foreach (var p in extra.GetType().GetProperties()) body[p.Name] = p.GetValue(extra);
        var r = await analyst.PostAsJsonAsync("/v1/sequences", body);
        Assert.Equal(HttpStatusCode.Created, r.StatusCode);
        return (await r.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("id").GetInt64();
    }

    /// <summary>The sequence of a mainshock at or above the trigger magnitude: declared, or, when the worker opened
    /// it first, the one the 409 points to.</summary>
    public static async Task<long> DeclareOrFindAsync(HttpClient analyst, string source, string id)
    {
        var r = await analyst.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source, id } });
        if (r.StatusCode == HttpStatusCode.Conflict)
            return long.Parse(r.Headers.Location!.OriginalString.Split('/')[^1], System.Globalization.CultureInfo.InvariantCulture);
        Assert.Equal(HttpStatusCode.Created, r.StatusCode);
        return (await r.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("id").GetInt64();
    }

    /// <summary>Polls the latest forecast until <paramref name="until"/> holds; fails with the last answer if it
    /// never does.</summary>
    public static async Task<JsonElement> LatestAsync(HttpClient client, long sequenceId, Func<JsonElement, bool> until)
    {
        var deadline = DateTime.UtcNow + WaitLimit;
        string last = "(nothing)";
        while (DateTime.UtcNow < deadline)
        {
            var r = await client.GetAsync($"/v1/sequences/{sequenceId}/forecasts/latest");
            last = $"{(int)r.StatusCode} {await r.Content.ReadAsStringAsync()}";
            if (r.StatusCode == HttpStatusCode.OK)
            {
                var f = await r.Content.ReadFromJsonAsync<JsonElement>();
                if (until(f)) return f;
            }
            await Task.Delay(100);
        }
        var seq = await client.GetStringAsync($"/v1/sequences/{sequenceId}");
        Assert.Fail($"No forecast of sequence {sequenceId} met the condition. Last answer: {last[..Math.Min(600, last.Length)]}; sequence: {seq}");
        return default;
    }

    public static async Task<JsonElement> SequenceAsync(HttpClient client, long id, Func<JsonElement, bool> until)
    {
        var deadline = DateTime.UtcNow + WaitLimit;
        JsonElement s = default;
        while (DateTime.UtcNow < deadline)
        {
            s = await client.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}");
            if (until(s)) return s;
            await Task.Delay(100);
        }
        Assert.Fail($"Sequence {id} never met the condition: {s}");
        return default;
    }

    public static int EventCount(JsonElement forecast) => forecast.GetProperty("input").GetProperty("eventCount").GetInt32();

    public static string Hash(JsonElement forecast) => forecast.GetProperty("input").GetProperty("catalogHash").GetString()!;

    public static JsonElement Cell(JsonElement forecast, double windowDays, double minMagnitude) =>
        forecast.GetProperty("result").GetProperty("table").EnumerateArray().First(c =>
            Math.Abs(c.GetProperty("t2Days").GetDouble() - c.GetProperty("t1Days").GetDouble() - windowDays) < 1e-6
            && Math.Abs(c.GetProperty("minMagnitude").GetDouble() - minMagnitude) < 1e-6);
}
