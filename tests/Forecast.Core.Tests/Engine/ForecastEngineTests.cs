using System.Text.Json;
using Forecast.Core.Forecasting;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;
using MathNet.Numerics.Distributions;

namespace Forecast.Core.Tests.Engine;

public class ForecastEngineTests
{
    static readonly DateTime Origin = new(2026, 3, 1, 3, 0, 0, DateTimeKind.Utc);
    static readonly GenericParameterSet Prior = GenericParameterSets.ReasenbergJones1989;

    // Invented demo sequence: Mm 6.5, generic-like parameters, b 1.0, complete above M 2.5.
    static IReadOnlyList<CatalogEvent> Simulated(int seed, double tDays = 30, double k = 150)
    {
        var spec = new SimulatedSequenceSpec(6.5, Origin, K: k, C: 0.05, P: 1.1, B: 1.0, Mc: 2.5, SDays: 0.01, TDays: tDays);
        return new SequenceSimulator(seed).Simulate(spec);
    }

    static ForecastRequest Request(IReadOnlyList<CatalogEvent> events, double issueDays) => new()
    {
        Mainshock = events[0],
        Events = events,
        IssueTimeUtc = Origin.AddDays(issueDays),
        BootstrapSamples = 20,
    };

    [Fact]
    public void TheSameRequestGivesTheSameForecastBitForBit()
    {
        var events = Simulated(seed: 7, tDays: 5);
        var first = JsonSerializer.Serialize(ForecastEngine.Run(Request(events, 5)));
        var second = JsonSerializer.Serialize(ForecastEngine.Run(Request(events, 5)));
        Assert.Equal(first, second);
    }

    [Fact]
    public void TheOrderOfTheInputEventsDoesNotChangeAnyNumber()
    {
        // The engine puts events in (time, id) order before any sum, so a shuffled or reversed catalog gives the
        // forecast of the ordered one bit for bit (floating-point sums depend on their order).
        var events = Simulated(seed: 11, tDays: 4);
        var ordered = JsonSerializer.Serialize(ForecastEngine.Run(Request(events, 4)));
        var reversed = JsonSerializer.Serialize(ForecastEngine.Run(Request(events.Reverse().ToList(), 4) with { Mainshock = events[0] }));
        var shuffled = events.ToArray();
        new Random(5).Shuffle(shuffled);
        var mixed = JsonSerializer.Serialize(ForecastEngine.Run(Request(shuffled, 4) with { Mainshock = events[0] }));
        Assert.Equal(ordered, reversed);
        Assert.Equal(ordered, mixed);
    }

    [Fact]
    public void WithNoAftershocksThePosteriorIsTheGenericPrior()
    {
        // Only the mainshock, issued at its origin time: nothing has been observed (the fit window is empty).
        var main = new CatalogEvent("main", Origin, 0, 0, 10, 6.5);
        var result = ForecastEngine.Run(new ForecastRequest { Mainshock = main, Events = [main], IssueTimeUtc = Origin });

        // Prior means and spreads of the 1989 generic set (Reasenberg & Jones 1989, from memory; spreads a project choice).
        Assert.Equal(Prior.Mean.A, result.Posterior.A, 0.01);
        Assert.Equal(Prior.Mean.B, result.Posterior.B, 0.01);
        Assert.Equal(Prior.Mean.P, result.Posterior.P, 0.01);
        Assert.Equal(Math.Log10(Prior.Mean.C), result.Posterior.Log10C, 0.02);
        Assert.Equal(Prior.SigmaA, result.Posterior.SdA, 0.02);
        Assert.Equal(Prior.SigmaP, result.Posterior.SdP, 0.01);
        Assert.Contains(result.Notes, n => n.Contains("generic", StringComparison.Ordinal));
    }

    [Fact]
    public void DefaultTableHasFourWindowsFromTheIssueTimeAndSixThresholds()
    {
        var events = Simulated(seed: 3, tDays: 2);
        var result = ForecastEngine.Run(Request(events, 2));
        Assert.Equal(4 * 6, result.Table.Count);
        Assert.Equal([1.0, 7, 30, 365], result.Table.Select(r => r.T2Days - r.T1Days).Distinct().ToArray());
        Assert.All(result.Table, r => Assert.Equal(2.0, r.T1Days, 1e-9));
        Assert.Equal([3.0, 4, 5, 6, 6.5, 7], result.Table.Select(r => r.MinMagnitude).Distinct().Order().ToArray());
        Assert.All(result.Table, r => Assert.Equal(Origin.AddDays(2), r.StartUtc));
    }

    [Fact]
    public void AUserSetMcAndFitWindowAreHonouredExactly()
    {
        var events = Simulated(seed: 11, tDays: 10);
        var request = Request(events, 10) with { Mc = 3.0, FitStartDays = 0.5, FitEndDays = 8 };
        var result = ForecastEngine.Run(request);

        // Counted directly: events with M >= Mc and S <= t <= T (the definition of the fit data, Ogata 1983).
        var expected = events.Skip(1).Count(e =>
        {
            var t = (e.TimeUtc - Origin).TotalDays;
            return e.Magnitude >= 3.0 - 1e-9 && t >= 0.5 && t <= 8;
        });
        Assert.Equal(3.0, result.Completeness.Mc);
        Assert.Equal("user", result.Completeness.Source);
        Assert.Equal((0.5, "user", 8.0), (result.FitStartDays, result.FitStartSource, result.FitEndDays));
        Assert.Equal(expected, result.Omori.EventCount);
        Assert.Equal(expected, result.Posterior.EventCount);
    }

    [Fact]
    public void ARichSequenceRecoversItsOwnParameters()
    {
        // Truth: K 150 /day above Mc 2.5, c 0.05 d, p 1.1, b 1.0 (the simulator's inputs).
        var events = Simulated(seed: 5, tDays: 30);
        var result = ForecastEngine.Run(Request(events, 30) with { Mc = 2.5, FitStartDays = 0.01 });
        Assert.True(result.Omori.EventCount > 500, $"{result.Omori.EventCount} events");
        Assert.InRange(result.Omori.P!.Value, 1.1 - 3 * result.Omori.SigmaP!.Value, 1.1 + 3 * result.Omori.SigmaP.Value);
        Assert.InRange(result.BValue.B, 1.0 - 3 * result.BValue.Sigma!.Value, 1.0 + 3 * result.BValue.Sigma.Value);
        // The posterior follows the sequence, not the prior (p 1.08, b 0.91): within 2 % of the MLE.
        Assert.Equal(result.Omori.P.Value, result.Posterior.P, result.Omori.P.Value * 0.02);
        Assert.Equal(result.BValue.B, result.Posterior.B, result.BValue.B * 0.02);
    }

    [Fact]
    public void ProbabilitiesAreCompatibleWithTheirExpectedNumbers()
    {
        var result = ForecastEngine.Run(Request(Simulated(seed: 9, tDays: 3), 3));
        Assert.All(result.Table, r =>
        {
            // Jensen: E[1 - exp(-N)] <= 1 - exp(-E N), equality only without spread.
            Assert.True(r.Probability <= 1 - Math.Exp(-r.ExpectedNumber) + 1e-12);
            Assert.InRange(r.Probability, 0, 1);
            Assert.True(r.Low95 <= r.Median && r.Median <= r.High95);
        });
        // Larger thresholds can only be less likely within one window.
        foreach (var window in result.Table.GroupBy(r => r.T2Days))
        {
            var ps = window.OrderBy(r => r.MinMagnitude).Select(r => r.Probability).ToArray();
            Assert.Equal(ps.OrderDescending(), ps);
        }
    }

    [Fact]
    public void BackgroundProbabilityIsThePoissonChanceOfAtLeastOneAndGainIsTheRatio()
    {
        // 0.002 independent M>=4 events per day, b = 1: the rate at M >= m is 0.002 * 10^-(m - 4) (Gutenberg-Richter).
        var background = new BackgroundRate(0.002, 4.0, 1.0, "test value");
        var result = ForecastEngine.Run(Request(Simulated(seed: 4, tDays: 1), 1) with { Background = background });
        foreach (var row in result.Table)
        {
            var mean = 0.002 * Math.Pow(10, -(row.MinMagnitude - 4)) * (row.T2Days - row.T1Days);
            var expected = 1 - Poisson.CDF(mean, 0); // MathNet's Poisson distribution
            Assert.Equal(expected, row.BackgroundProbability!.Value, 1e-9);
            Assert.Equal(row.Probability / expected, row.Gain!.Value, 1e-6 * row.Gain.Value);
        }
    }

    [Fact]
    public void EventsBeforeTheMainshockAndAfterTheIssueTimeAreIgnored()
    {
        var events = Simulated(seed: 2, tDays: 4).ToList();
        var baseline = ForecastEngine.Run(Request(events, 2));
        var extra = new List<CatalogEvent>(events)
        {
            new("fore", Origin.AddHours(-5), 0, 0, 10, 5.0),
            new("later", Origin.AddDays(3), 0, 0, 10, 5.5),
        };
        extra.Reverse(); // unsorted input
        var withExtra = ForecastEngine.Run(Request(extra, 2) with { Mainshock = events[0] });
        Assert.Equal(baseline.AftershockCount, withExtra.AftershockCount);
        Assert.Equal(JsonSerializer.Serialize(baseline.Table), JsonSerializer.Serialize(withExtra.Table));
    }

    [Fact]
    public void AnIssueTimeBeforeTheMainshockIsRefused()
    {
        var main = new CatalogEvent("main", Origin, 0, 0, 10, 6.5);
        Assert.Throws<ArgumentException>(() => ForecastEngine.Run(
            new ForecastRequest { Mainshock = main, Events = [main], IssueTimeUtc = Origin.AddHours(-1) }));
    }
}
