using Forecast.Storage.Events;

namespace Forecast.Cli;

/// <summary>The invented demo scenario: a mainshock in the open ocean at 0° N, 0° E ("Demo Basin", a made-up
/// name) with a few aftershocks. Nothing here is real catalog data.</summary>
static class DemoScenario
{
    public const string Source = "demo";

    public static IReadOnlyList<EventInput> Events()
    {
        var origin = new DateTime(2026, 11, 30, 3, 0, 0, DateTimeKind.Utc);
        EventInput E(string id, double minutes, double lat, double lon, double mag) =>
            new(Source, id, origin.AddMinutes(minutes), lat, lon, 10, mag, "Mw", "reviewed");
        return
        [
            E("demo-main", 0, 0.0, 0.0, 6.4),
            E("demo-0001", 12, 0.05, -0.03, 4.1),
            E("demo-0002", 47, -0.02, 0.06, 3.6),
            E("demo-0003", 190, 0.08, 0.02, 4.4),
        ];
    }
}
