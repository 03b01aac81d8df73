using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text.Json;

namespace Forecast.Resilience.Tests;

/// <summary>An invented sequence for the process-level tests: an M 4.8 mainshock (below the 5.0 trigger, so only
/// the declared sequence exists; zone radius 10 km, the floor) and seeded aftershocks within 3.3 km of it.</summary>
static class Scenario
{
    public const double Latitude = 12.0;
    public const double Longitude = 45.0;

    /// <summary>Two days before now, so that every aftershock is before any issue time.</summary>
    public static readonly DateTime MainshockTime = DateTime.UtcNow.AddDays(-2);

    public static object Mainshock(string source) => Event(source, "main", MainshockTime, Latitude, Longitude, 4.8);

    /// <summary>Aftershocks <paramref name="prefix"/>-0 ... : log-uniform in time between 0.01 and 1.9 days after
    /// the mainshock, Gutenberg-Richter magnitudes with b = 1 from M 1.5 (capped at 4.5), seeded.</summary>
    public static List<object> Aftershocks(string source, string prefix, int count, int seed)
    {
        var random = new Random(seed);
        var list = new List<object>(count);
        for (var i = 0; i < count; i++)
        {
            var days = Math.Exp(Math.Log(0.01) + random.NextDouble() * (Math.Log(1.9) - Math.Log(0.01)));
            var magnitude = Math.Min(4.5, Math.Round(1.5 - Math.Log10(1 - random.NextDouble()), 1));
            list.Add(Event(source, $"{prefix}-{i}", MainshockTime.AddDays(days),
                Latitude + (random.NextDouble() - 0.5) * 0.06, Longitude + (random.NextDouble() - 0.5) * 0.06, magnitude));
        }
        return list;
    }

    static object Event(string source, string id, DateTime time, double latitude, double longitude, double magnitude) => new
    {
        id, source, time = time.ToString("yyyy-MM-ddTHH:mm:ss.fffZ", CultureInfo.InvariantCulture),
        latitude = Math.Round(latitude, 5), longitude = Math.Round(longitude, 5), depthKm = 8.0, magnitude,
        magnitudeType = "ML", status = "automatic",
    };

    /// <summary>Posts the mainshock and declares its sequence; returns the sequence id.</summary>
    public static async Task<long> DeclareAsync(HttpClient admin, string source)
    {
        (await admin.PostAsJsonAsync("/v1/events", Mainshock(source))).EnsureSuccessStatusCode();
        var r = await admin.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source, id = "main" } });
        Assert.Equal(HttpStatusCode.Created, r.StatusCode);
        return (await r.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("id").GetInt64();
    }

    /// <summary>The latest forecast of the sequence, or null while it has none (or the service answers otherwise).</summary>
    public static async Task<JsonElement?> LatestAsync(HttpClient client, long sequenceId)
    {
        try
        {
            var r = await client.GetAsync($"/v1/sequences/{sequenceId}/forecasts/latest");
            return r.StatusCode == HttpStatusCode.OK ? await r.Content.ReadFromJsonAsync<JsonElement>() : null;
        }
        catch (HttpRequestException)
        {
            return null;
        }
    }
}
