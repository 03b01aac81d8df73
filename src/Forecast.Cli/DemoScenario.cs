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

    /// <summary>Fixed, so reloading is idempotent; two days before the forecasts the demo issues.</summary>
    public static readonly DateTime OriginUtc = new(2026, 11, 28, 3, 0, 0, DateTimeKind.Utc);

    public static IReadOnlyList<EventInput> Events()
    {
        var spec = SimulatedSequenceSpec.FromReasenbergJones(GenericParameterSets.ReasenbergJones1989.Mean,
            MainshockMagnitude, mc: 2.5, OriginUtc, sDays: 0, tDays: Days) with
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
