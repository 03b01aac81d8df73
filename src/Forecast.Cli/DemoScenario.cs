using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;
using Forecast.Storage.Events;

namespace Forecast.Cli;

/// <summary>The invented demo scenario: a magnitude 6.4 mainshock in the open ocean at 0° N, 0° E (the
/// "Demo region", a made-up name) and two days of seeded synthetic aftershocks. Nothing here is real data.</summary>
/// <remarks>Aftershocks come from <see cref="SequenceSimulator"/> with the generic Reasenberg &amp; Jones (1989)
/// parameters (from memory), Mc 2.5, the early incompleteness of Helmstetter et al. (2006), seed 2026; the same
/// events every time, so loading the demo twice changes nothing.</remarks>
static class DemoScenario
{
    public const string Source = "demo";
    public const string MainshockId = "demo-main";
    public const string RegionName = SequenceSimulator.DemoRegionName;
    public const double MainshockMagnitude = 6.4;
    public const double Days = 2.0;
    const int Seed = 2026;

    /// <summary>The mainshock time of a first load: two days ago, on the hour, so the sequence runs up to now and
    /// the forecasts the service issues at once do not look at a gap. A later load reuses the stored time.</summary>
    public static DateTime FreshOriginUtc(DateTime nowUtc) =>
        new DateTime(nowUtc.Ticks - nowUtc.Ticks % TimeSpan.TicksPerHour, DateTimeKind.Utc).AddDays(-Days);

    /// <summary>The demo events for a mainshock at <paramref name="originUtc"/>: the same events for the same
    /// time, so loading the demo twice changes nothing.</summary>
    public static IReadOnlyList<EventInput> Events(DateTime originUtc)
    {
        var spec = SimulatedSequenceSpec.FromReasenbergJones(GenericParameterSets.ReasenbergJones1989.Mean,
            MainshockMagnitude, mc: 2.5, originUtc, sDays: 0, tDays: Days) with
        {
            EarlyIncompleteness = true, ScatterKm = 5,
        };
        return new SequenceSimulator(Seed).Simulate(spec)
            .Select((e, i) => new EventInput(Source, i == 0 ? MainshockId : $"demo-{i:D4}", e.TimeUtc,
                Math.Round(e.Latitude, 4), Math.Round(e.Longitude, 4), Math.Round(e.DepthKm, 1), e.Magnitude,
                i == 0 ? "Mw" : "ML", "reviewed"))
            .ToList();
    }
}
