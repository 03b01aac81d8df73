using Forecast.Core.Forecasting;
using MathNet.Numerics.Distributions;

namespace Forecast.Core.Tests.Forecasting;

public class PoissonMixtureTests
{
    [Theory]
    [InlineData(0.02)]
    [InlineData(0.3)]
    [InlineData(3.7)]
    [InlineData(42.5)]
    [InlineData(250)]
    [InlineData(999)]
    public void SingleComponentEqualsMathNetPoisson(double mean)
    {
        var mixture = new PoissonMixture([mean], [1.0]);
        // Reference: MathNet Poisson.CDF, and the quantile as the smallest k with CDF(k) >= q.
        foreach (double q in new[] { 0.025, 0.5, 0.975 })
            Assert.Equal(MathNetQuantile(mean, q), mixture.Quantile(q));
        foreach (long k in new long[] { 0, 1, (long)mean, (long)(mean + 2 * Math.Sqrt(mean)) + 1 })
            Assert.Equal(Poisson.CDF(mean, k), mixture.Cdf(k), 1e-12);
    }

    [Fact]
    public void TwoComponentCdfIsTheWeightedSumOfMathNetCdfs()
    {
        var mixture = new PoissonMixture([2.0, 30.0], [0.25, 0.75]);
        for (long k = 0; k < 60; k += 3)
            Assert.Equal(0.25 * Poisson.CDF(2, k) + 0.75 * Poisson.CDF(30, k), mixture.Cdf(k), 1e-12);
    }

    [Fact]
    public void HugeMeansUseTheNormalApproximationWithinOneCount()
    {
        // Normal approximation with continuity correction above a mean of 1,000 (common practice); MathNet exact reference.
        const double mean = 50_000;
        var mixture = new PoissonMixture([mean], [1.0]);
        foreach (double q in new[] { 0.025, 0.5, 0.975 })
            Assert.InRange(mixture.Quantile(q), MathNetQuantile(mean, q) - 1, MathNetQuantile(mean, q) + 1);
    }

    [Fact]
    public void InvalidComponentsAreRejected()
    {
        Assert.Throws<ArgumentException>(() => new PoissonMixture([1.0, 2.0], [1.0]));
        Assert.Throws<ArgumentException>(() => new PoissonMixture([-1.0], [1.0]));
        Assert.Throws<ArgumentException>(() => new PoissonMixture([1.0], [0.0]));
    }

    internal static long MathNetQuantile(double mean, double q)
    {
        long lo = -1, hi = (long)(mean + 20 * Math.Sqrt(mean) + 20);
        while (hi - lo > 1)
        {
            long mid = (lo + hi) / 2;
            if (Poisson.CDF(mean, mid) >= q) hi = mid; else lo = mid;
        }
        return hi;
    }
}
