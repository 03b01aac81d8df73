using Forecast.Core.Background;
using MathNet.Numerics.Distributions;
using MathNet.Numerics.Random;

namespace Forecast.Core.Tests.Background;

public class PoissonBackgroundTests
{
    static readonly DateTime T0 = new(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);

    // All at one place and counted with decluster: false, so declustering plays no part.
    static List<CatalogEvent> EventsWithCounts(IReadOnlyList<int> countPerDay, double magnitude = 4.0)
    {
        var events = new List<CatalogEvent>();
        for (var day = 0; day < countPerDay.Count; day++)
        {
            for (var k = 0; k < countPerDay[day]; k++)
            {
                var tDays = day + (k + 0.5) / (countPerDay[day] + 1);
                events.Add(new($"e{day}-{k}", T0.AddDays(tDays), 0, 0, 10, magnitude));
            }
        }
        return events;
    }

    [Fact]
    public void EmptyWindowEstimatorIsMinusLogOfTheEmptyFraction()
    {
        // 10 one-day windows, 4 empty: lambda = -ln(4 / 10) = 0.916291 per window (Gardner & Knopoff form in
        // METHODS.md); mean count 9 / 10 = 0.9; D = s^2 / mean = 0.98889 / 0.9 = 1.098765 (by hand).
        var catalog = EventsWithCounts([0, 1, 0, 2, 1, 0, 1, 0, 3, 1]);

        var estimate = PoissonBackground.Estimate(catalog, 4.0, T0, T0.AddDays(10), windowDays: 1, decluster: false);

        Assert.Equal(0.916291, estimate.EmptyWindowRatePerDay, 1e-6);
        Assert.Equal(0.9, estimate.RatePerDay, 1e-12);
        Assert.Equal(4, estimate.EmptyWindowCount);
        Assert.Equal(10, estimate.WindowCount);
        Assert.Equal(1.098765, estimate.DispersionIndex, 1e-6);
        Assert.Equal(9.888889, estimate.ChiSquare, 1e-6);
        // MathNet's chi-square with 9 degrees of freedom, upper tail.
        Assert.Equal(1 - ChiSquared.CDF(9, 9.888889), estimate.DispersionPValue, 1e-6);
    }

    [Fact]
    public void EmptyWindowEstimatorIsUndefinedWhenNoWindowIsEmpty()
    {
        var estimate = PoissonBackground.Estimate(
            EventsWithCounts([1, 2, 1]), 4.0, T0, T0.AddDays(3), 1, decluster: false);

        Assert.True(double.IsNaN(estimate.EmptyWindowRatePerDay));
        Assert.Contains("No window is empty", estimate.Note);
    }

    [Fact]
    public void DispersionIndexIsAboutOneForASeededPoissonProcess()
    {
        // 1000 days of a Poisson process at 2 per day: D has standard error sqrt(2 / 999) = 0.045 (textbook), so
        // +-0.2 is over four standard errors.
        var random = new MersenneTwister(3);
        var counts = Enumerable.Range(0, 1000).Select(_ => Poisson.Sample(random, 2.0)).ToArray();

        var estimate = PoissonBackground.Estimate(
            EventsWithCounts(counts), 4.0, T0, T0.AddDays(1000), 1, decluster: false);

        Assert.Equal(1.0, estimate.DispersionIndex, 0.2);
        Assert.True(estimate.DispersionPValue > 0.001);
        Assert.Equal(2.0, estimate.RatePerDay, 0.15);
        // Both estimators estimate the same rate for Poisson counts.
        Assert.Equal(estimate.RatePerDay, estimate.EmptyWindowRatePerDay, 0.2);
    }

    [Fact]
    public void DispersionIndexIsLargeForAClusteredProcess()
    {
        // Bursts: on each of 30 random days out of 300, 20 events; no events otherwise. D = 18 by construction
        // of the counts (variance 36, mean 2: 20^2 * 0.1 * 0.9 / 2 with the n0 - 1 correction).
        var random = new MersenneTwister(4);
        var counts = new int[300];
        foreach (var day in Enumerable.Range(0, 300).OrderBy(_ => random.Next()).Take(30)) counts[day] = 20;

        var estimate = PoissonBackground.Estimate(
            EventsWithCounts(counts), 4.0, T0, T0.AddDays(300), 1, decluster: false);

        Assert.Equal(18.06, estimate.DispersionIndex, 0.01);
        Assert.True(estimate.DispersionPValue < 1e-9);
    }

    [Fact]
    public void EstimateCountsOnlyIndependentEventsWhenDeclustering()
    {
        // A M 6 with nine aftershocks a few km away within a day, and an unrelated M 4 far away on day 50.
        var catalog = new List<CatalogEvent> { new("main", T0.AddDays(10), 35, -118, 10, 6.0) };
        for (var k = 1; k <= 9; k++) catalog.Add(new($"a{k}", T0.AddDays(10 + 0.1 * k), 35.01, -118, 10, 4.0));
        catalog.Add(new("far", T0.AddDays(50), 10, 20, 10, 4.0));

        var estimate = PoissonBackground.Estimate(catalog, 4.0, T0, T0.AddDays(100), windowDays: 10);

        Assert.Equal(2, estimate.EventCount);
        Assert.Equal(2.0 / 100, estimate.RatePerDay, 1e-12);
        Assert.True(estimate.Declustered);
    }

    [Fact]
    public void EstimateLeavesOutEventsBelowTheThresholdOrBeyondTheLastWholeWindow()
    {
        // Period 25 days, windows of 10: days 20-25 are a remainder and not counted.
        List<CatalogEvent> catalog =
        [
            new("small", T0.AddDays(1), 0, 0, 10, 3.9),
            new("counted", T0.AddDays(2), 0, 0, 10, 4.0),
            new("remainder", T0.AddDays(22), 0, 0, 10, 5.0),
            new("unsorted-early", T0.AddDays(-3), 0, 0, 10, 5.0),
        ];

        var estimate = PoissonBackground.Estimate(catalog, 4.0, T0, T0.AddDays(25), 10, decluster: false);

        Assert.Equal(1, estimate.EventCount);
        Assert.Equal([1, 0], estimate.WindowCounts);
        Assert.Contains("not counted", estimate.Note);
    }

    [Fact]
    public void EstimateRejectsAPeriodShorterThanOneWindow()
    {
        Assert.Throws<ArgumentException>(() => PoissonBackground.Estimate([], 4.0, T0, T0.AddDays(5), 10));
        Assert.Throws<ArgumentException>(() => PoissonBackground.Estimate([], double.NaN, T0, T0.AddDays(50), 10));
    }

    [Theory]
    [InlineData(0.01, 7)]
    [InlineData(0.5, 1)]
    [InlineData(3.0, 2)]
    [InlineData(1e-4, 1)]
    public void ProbabilityIsOneMinusThePoissonChanceOfNone(double ratePerDay, double durationDays)
    {
        // MathNet: P(N >= 1) = 1 - Poisson.CDF(rate dt, 0).
        var expected = 1 - Poisson.CDF(ratePerDay * durationDays, 0);

        Assert.Equal(expected, PoissonBackground.Probability(ratePerDay, durationDays), 1e-12);
    }

    [Fact]
    public void ProbabilityIsZeroForAZeroRate()
    {
        Assert.Equal(0.0, PoissonBackground.Probability(0, 30));
    }

    [Fact]
    public void ProbabilityKeepsItsDigitsForTinyRates()
    {
        // 1 - exp(-x) = x - x^2 / 2 + ...: for x = 1e-12 the answer is 1e-12 to 12 digits (Taylor series).
        Assert.Equal(1e-12, PoissonBackground.Probability(1e-12, 1), 1e-24);
    }

    [Theory]
    [InlineData(0.1, 0.01, 10.0)]
    [InlineData(0.05, 0.05, 1.0)]
    [InlineData(0.2, 0, double.PositiveInfinity)] // documented: no background, some forecast
    [InlineData(0, 0, double.NaN)] // documented: nothing either way
    public void ProbabilityGainIsTheRatioWithDefinedEdges(double forecastP, double backgroundP, double expected)
    {
        Assert.Equal(expected, PoissonBackground.ProbabilityGain(forecastP, backgroundP), 1e-12);
    }

    [Fact]
    public void ProbabilityGainRejectsValuesThatAreNotProbabilities()
    {
        Assert.Throws<ArgumentException>(() => PoissonBackground.ProbabilityGain(1.5, 0.1));
    }

    [Fact]
    public void ScaleRateFollowsGutenbergRichter()
    {
        // rate(M) = rate(Mref) 10^(-b (M - Mref)): 2 per day at M 3 with b = 1 is 0.02 per day at M 5.
        Assert.Equal(0.02, PoissonBackground.ScaleRate(2.0, b: 1.0, fromMagnitude: 3.0, toMagnitude: 5.0), 1e-12);
    }
}
