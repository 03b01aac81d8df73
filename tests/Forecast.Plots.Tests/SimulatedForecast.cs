using Forecast.Core;
using Forecast.Core.Forecasting;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;
using Forecast.Plots;

namespace Forecast.Plots.Tests;

/// <summary>A forecast of a seeded synthetic sequence in the invented Demo region, run through the real engine.</summary>
public static class SimulatedForecast
{
    public static readonly DateTime MainshockUtc = new(2026, 3, 1, 6, 0, 0, DateTimeKind.Utc);

    public static (PlotInput Input, ForecastResult Result, IReadOnlyList<CatalogEvent> Catalog) Make(
        int seed = 7, double days = 3, bool exercise = true, double mainshockMagnitude = 6.0)
    {
        var spec = SimulatedSequenceSpec.FromReasenbergJones(GenericParameterSets.ReasenbergJones1989.Mean,
            mainshockMagnitude, mc: 2.5, MainshockUtc, sDays: 0.01, tDays: days);
        var catalog = new SequenceSimulator(seed).Simulate(spec);
        var issue = MainshockUtc.AddDays(days);
        var result = ForecastEngine.Run(new ForecastRequest
        {
            Mainshock = catalog[0], Events = catalog.Skip(1).ToList(), IssueTimeUtc = issue, BootstrapSamples = 0, Seed = 1,
        });
        var events = catalog.Select((e, i) => new PlotEvent(e.TimeUtc, e.Latitude, e.Longitude, e.Magnitude,
            i == 0 ? EventRole.Mainshock : EventRole.Aftershock)).ToList();
        var input = PlotInputs.FromResult(result, "Simulated sequence (seed " + seed + ")", exercise, 1, "draft", 0, 0, 40, events);
        return (input, result, catalog);
    }
}
