using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;

namespace Forecast.Core.Tests.Posterior;

/// <summary>Seeded synthetic sequences shared by the posterior and forecast tests (no real event data anywhere).</summary>
internal static class SequenceFixtures
{
    public static readonly DateTime Origin = new(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);
    public static readonly GenericParameterSet Prior = GenericParameterSets.ReasenbergJones1989;

    /// <summary>Simulates with Reasenberg-Jones parameters and returns the data over [S, T] as the posterior sees it.</summary>
    public static AftershockData Simulate(int seed, RjParameters truth, double mm, double mc, double sDays, double tDays)
    {
        var spec = SimulatedSequenceSpec.FromReasenbergJones(truth, mm, mc, Origin, sDays, tDays);
        var catalog = new SequenceSimulator(seed).Simulate(spec);
        return AftershockData.FromCatalog(catalog.Skip(1), Origin, mm, mc, 0.1, sDays, tDays);
    }
}
