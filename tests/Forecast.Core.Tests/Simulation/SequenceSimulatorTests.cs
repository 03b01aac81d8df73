using Forecast.Core.Omori;
using Forecast.Core.Simulation;

namespace Forecast.Core.Tests.Simulation;

public class SequenceSimulatorTests
{
    static readonly DateTime Origin = new(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);
    static readonly SimulatedSequenceSpec Spec = new(6.0, Origin, K: 50, C: 0.05, P: 1.1, B: 1.0, Mc: 2.5, SDays: 0, TDays: 30);

    [Fact]
    public void SameSeedGivesTheSameCatalog()
    {
        var first = new SequenceSimulator(7).Simulate(Spec);
        var second = new SequenceSimulator(7).Simulate(Spec);
        Assert.Equal(first, second);
        Assert.NotEqual(first, new SequenceSimulator(8).Simulate(Spec));
    }

    [Fact]
    public void MainshockComesFirstThenAftershocksInTimeOrderWithSequentialIds()
    {
        var catalog = new SequenceSimulator(1).Simulate(Spec);
        Assert.Equal("sim-000000", catalog[0].Id);
        Assert.Equal(Origin, catalog[0].TimeUtc);
        Assert.Equal(6.0, catalog[0].Magnitude);
        for (int i = 1; i < catalog.Count; i++)
        {
            Assert.Equal($"sim-{i:D6}", catalog[i].Id);
            Assert.True(catalog[i].TimeUtc >= catalog[i - 1].TimeUtc);
            Assert.Equal(DateTimeKind.Utc, catalog[i].TimeUtc.Kind);
        }
    }

    [Fact]
    public void EventsScatterAroundTheInventedDemoRegion()
    {
        // "Demo region": invented, 0 N 0 E in open ocean; 10 km scatter is about 0.09 degrees.
        var catalog = new SequenceSimulator(2).Simulate(Spec);
        Assert.All(catalog, e => Assert.True(Math.Abs(e.Latitude) < 1 && Math.Abs(e.Longitude) < 1));
        Assert.Equal("Demo region", SequenceSimulator.DemoRegionName);
    }

    [Theory]
    [InlineData(1.0)]
    [InlineData(1.0 + 1e-10)]
    [InlineData(0.8)]
    [InlineData(1.4)]
    public void InverseCumulativeInvertsTheOmoriIntegral(double p)
    {
        // F(t) = A(c, p; S, t) / A(c, p; S, T) (Ogata 1983 closed form); the inverse must return t with F(t) = q.
        foreach (double q in new[] { 1e-6, 0.1, 0.5, 0.9, 0.999999 })
        {
            double t = SequenceSimulator.InverseCumulative(q, 0.05, p, 0.2, 100);
            double f = OmoriUtsu.Integral(0.05, p, 0.2, t) / OmoriUtsu.Integral(0.05, p, 0.2, 100);
            Assert.Equal(q, f, 1e-10);
        }
    }

    [Fact]
    public void EventCountHasThePoissonMeanKA()
    {
        // E[count] = K A(c, p) and Var = K A; the mean of 200 replicas is within 4 of its standard errors.
        double mean = 50 * OmoriUtsu.Integral(0.05, 1.1, 0, 30);
        var sim = new SequenceSimulator(3);
        double[] counts = Enumerable.Range(0, 200).Select(_ => (double)sim.OmoriTimes(50, 0.05, 1.1, 0, 30).Length).ToArray();
        Assert.Equal(mean, counts.Average(), 4 * Math.Sqrt(mean / 200));
    }

    [Fact]
    public void MagnitudesAreBinnedGutenbergRichterAboveMc()
    {
        // Binned GR is geometric in the bin index (Tinti & Mulargia 1987): the exact estimator recovers b.
        double[] m = new SequenceSimulator(4).Magnitudes(50_000, 1.0, 2.5, 0.1);
        Assert.All(m, x => Assert.True(x >= 2.5 - 1e-9 && Math.Abs(x * 10 - Math.Round(x * 10)) < 1e-9));
        double b = Math.Log(1 + 0.1 / (m.Average() - 2.5)) / (0.1 * Math.Log(10));
        Assert.Equal(1.0, b, 4 * 1.0 / Math.Sqrt(50_000));   // sigma_b ~ b / sqrt(n) (Aki 1965)
    }

    [Fact]
    public void EarlyIncompletenessDropsSmallEventsSoonAfterTheMainshock()
    {
        // Helmstetter et al. (2006): Mc(t) = Mm - 4.5 - 0.75 log10 t; for Mm 6 at t = 0.01 d that is 3.0.
        var spec = Spec with { EarlyIncompleteness = true, K = 200 };
        var catalog = new SequenceSimulator(5).Simulate(spec);
        foreach (var e in catalog.Skip(1))
        {
            double t = (e.TimeUtc - Origin).TotalDays;
            Assert.True(e.Magnitude >= SequenceSimulator.EarlyCompleteness(6.0, t) - 1e-6);
        }
        Assert.Equal(3.0, SequenceSimulator.EarlyCompleteness(6.0, 0.01), 1e-12);
        Assert.True(catalog.Count < new SequenceSimulator(5).Simulate(spec with { EarlyIncompleteness = false }).Count);
    }

    [Fact]
    public void TimesFollowTheOmoriLawOnTheirWindow()
    {
        // Kolmogorov distance between the empirical CDF and F(t) = A(S, t) / A(S, T) below 1.63 / sqrt(n)
        // (1 % critical value of the Kolmogorov-Smirnov statistic, asymptotic; common practice).
        double[] t = new SequenceSimulator(6).OmoriTimes(500, 0.1, 1.2, 0.5, 50);
        double total = OmoriUtsu.Integral(0.1, 1.2, 0.5, 50), d = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double f = OmoriUtsu.Integral(0.1, 1.2, 0.5, t[i]) / total;
            d = Math.Max(d, Math.Max(Math.Abs(f - i / (double)t.Length), Math.Abs(f - (i + 1) / (double)t.Length)));
        }
        Assert.True(d < 1.63 / Math.Sqrt(t.Length), $"KS distance {d}");
        Assert.InRange(t.Min(), 0.5, 50);
    }
}
