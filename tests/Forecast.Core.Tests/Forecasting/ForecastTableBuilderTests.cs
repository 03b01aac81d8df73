using Forecast.Core.Forecasting;
using Forecast.Core.Omori;
using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Tests.Posterior;
using MathNet.Numerics;
using MathNet.Numerics.Distributions;

namespace Forecast.Core.Tests.Forecasting;

public class ForecastTableBuilderTests
{
    static readonly GenericParameterSet Prior = SequenceFixtures.Prior;

    [Fact]
    public void DefaultsAreADayAWeekAMonthAndAYearAndWholeMagnitudesPlusTheMainshock()
    {
        Assert.Equal([new(2, 3), new(2, 9), new(2, 32), new ForecastWindow(2, 367)], ForecastTableBuilder.DefaultWindows(2));
        Assert.Equal([3, 4, 5, 6, 7], ForecastTableBuilder.DefaultThresholds(6.0));
        Assert.Equal([3, 4, 5, 6, 6.3, 7], ForecastTableBuilder.DefaultThresholds(6.3));
    }

    [Fact]
    public void FixedParametersReproduceTheWorkedValue()
    {
        // METHODS.md section 4: N = 0.111, P = 10.5 % for M >= Mm within 7 days (generic 1989 values, from memory).
        var table = ForecastTableBuilder.BuildFixed(Prior.Mean, 6.0, [new(0, 7)], [6.0]);
        var cell = Assert.Single(table.Cells);
        Assert.Equal(0.111, cell.ExpectedNumber, 0.001);
        Assert.Equal(0.105, cell.ProbabilityOfAtLeastOne, 0.001);
        Assert.Equal(0, cell.Median);        // Poisson(0.111): P(0) = 0.895 (MathNet Poisson.CDF)
        Assert.Equal(1, cell.Upper95);       // P(X <= 1) = 0.9944 >= 0.975
    }

    [Fact]
    public void NoDataGivesTheGenericForecastIntegratedOverThePrior()
    {
        // With a, p and log10 c independent a priori: E[N] = E[10^a] E[A(c, p)], where E[10^a] = 10^mu exp((sigma ln10)^2 / 2)
        // (lognormal mean) and E[A] by nested MathNet Gauss-Legendre quadrature over the normal priors of p and log10 c.
        var posterior = RjPosterior.Compute(Prior, AftershockData.None(6.0, 3.0));
        var cell = Assert.Single(ForecastTableBuilder.Build(posterior, [new(0, 7)], [6.0]).Cells);
        double ln10 = Math.Log(10);
        double tenA = Math.Pow(10, Prior.Mean.A) * Math.Exp(Math.Pow(Prior.SigmaA * ln10, 2) / 2);
        double mg = Math.Log10(Prior.Mean.C), sg = Prior.SigmaLog10C, mp = Prior.Mean.P, sp = Prior.SigmaP;
        double meanIntegral = Integrate.GaussLegendre(
            g => Normal.PDF(mg, sg, g) * Integrate.GaussLegendre(
                p => Normal.PDF(mp, sp, p) * OmoriUtsu.Integral(Math.Pow(10, g), p, 0, 7), mp - 8 * sp, mp + 8 * sp, 128),
            mg - 8 * sg, mg + 8 * sg, 128);
        Assert.Equal(tenA * meanIntegral, cell.ExpectedNumber, 1e-4 * cell.ExpectedNumber);
    }

    [Fact]
    public void MixtureProbabilityIsBelowThePoissonProbabilityOfTheMeanNumber()
    {
        // Jensen: E[1 - exp(-N)] < 1 - exp(-E N) when N varies (METHODS.md section 4).
        var data = SequenceFixtures.Simulate(31, Prior.Mean with { A = -1.55 }, 6.0, 3.5, 0, 2);
        var posterior = RjPosterior.Compute(Prior, data);
        var table = ForecastTableBuilder.Build(posterior, ForecastTableBuilder.DefaultWindows(2), ForecastTableBuilder.DefaultThresholds(6.0));
        Assert.Equal(20, table.Cells.Count);
        foreach (var cell in table.Cells)
        {
            double poissonOfMean = 1 - Math.Exp(-cell.ExpectedNumber);
            if (poissonOfMean < 1 - 1e-12) Assert.True(cell.ProbabilityOfAtLeastOne < poissonOfMean, $"{cell}");
            Assert.InRange(cell.ProbabilityOfAtLeastOne, 0, 1);
        }
    }

    [Fact]
    public void TwentyEventForecastMatchesBruteForceIntegrationOnAFineGrid()
    {
        var data = SequenceFixtures.Simulate(31, Prior.Mean with { A = -1.55 }, 6.0, 3.5, 0, 2);
        var posterior = RjPosterior.Compute(Prior, data);
        Assert.InRange(posterior.EventCount, 15, 30);
        var window = new ForecastWindow(2, 32);
        const double threshold = 2.5;
        var cell = Assert.Single(ForecastTableBuilder.Build(posterior, [window], [threshold]).Cells);

        var brute = BruteForce.Forecast(Prior, data, posterior, window, threshold);
        Assert.Equal(brute.Mean, cell.ExpectedNumber, 0.01 * brute.Mean);
        Assert.Equal(brute.Probability, cell.ProbabilityOfAtLeastOne, 0.01 * brute.Probability);
        // Integer quantiles: 1 % or one count, whichever is larger.
        Assert.InRange(cell.Median, brute.Median - Math.Max(1, 0.01 * brute.Median), brute.Median + Math.Max(1, 0.01 * brute.Median));
        Assert.InRange(cell.Lower95, brute.Lower - Math.Max(1, 0.01 * brute.Lower), brute.Lower + Math.Max(1, 0.01 * brute.Lower));
        Assert.InRange(cell.Upper95, brute.Upper - Math.Max(1, 0.01 * brute.Upper), brute.Upper + Math.Max(1, 0.01 * brute.Upper));
    }

    [Fact]
    public void SameInputGivesBitwiseTheSameTable()
    {
        var data = SequenceFixtures.Simulate(32, Prior.Mean, 6.0, 3.0, 0, 3);
        ForecastTable Run() => ForecastTableBuilder.Build(RjPosterior.Compute(Prior, data),
            ForecastTableBuilder.DefaultWindows(3), ForecastTableBuilder.DefaultThresholds(6.0));
        Assert.Equal(Run().Cells, Run().Cells);
    }

    [Fact]
    public void ProbabilityNeverExceedsOneWhenManyEventsAreExpected()
    {
        // Regression: normalised weights sum to 1 + a few ulp, which once gave P = 1.0000000000000069.
        var data = SequenceFixtures.Simulate(33, Prior.Mean, 7.0, 2.5, 0, 3);
        var table = ForecastTableBuilder.Build(RjPosterior.Compute(Prior, data), ForecastTableBuilder.DefaultWindows(3), [2.5, 3.0]);
        Assert.All(table.Cells, c => Assert.InRange(c.ProbabilityOfAtLeastOne, 0, 1));
        Assert.Contains(table.Cells, c => c.ProbabilityOfAtLeastOne == 1);
    }

    [Fact]
    public void BadWindowsAreRejected()
    {
        Assert.Throws<ArgumentException>(() => ForecastTableBuilder.BuildFixed(Prior.Mean, 6, [new(5, 5)], [6.0]));
        Assert.Throws<ArgumentException>(() => ForecastTableBuilder.DefaultWindows(-1));
    }
}
