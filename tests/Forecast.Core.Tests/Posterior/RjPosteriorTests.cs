using Forecast.Core.Omori;
using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Tests.Posterior;

public class RjPosteriorTests
{
    static readonly GenericParameterSet Prior = SequenceFixtures.Prior;

    [Fact]
    public void NoDataAndNoWindowReproduceThePrior()
    {
        // With N = 0 and T <= S the likelihood is 1: the posterior is the generic prior of Reasenberg & Jones (1989)
        // with the set's spreads, up to quadrature error (trapezoid on +-7 sd: far below 1e-6).
        var result = RjPosterior.Compute(Prior, AftershockData.None(6.0, 3.0));
        var s = result.Summary;
        Assert.True(result.CoverageOk, result.Message);
        Assert.Equal(Prior.Mean.A, s.MeanA, 1e-6);
        Assert.Equal(Prior.Mean.B, s.MeanB, 1e-6);
        Assert.Equal(Prior.Mean.P, s.MeanP, 1e-6);
        Assert.Equal(Math.Log10(Prior.Mean.C), s.MeanLog10C, 1e-6);
        Assert.Equal(Prior.SigmaA, s.SdA, 1e-5);
        Assert.Equal(Prior.SigmaB, s.SdB, 1e-5);
        Assert.Equal(Prior.SigmaP, s.SdP, 1e-5);
        Assert.Equal(Prior.SigmaLog10C, s.SdLog10C, 1e-5);
        for (int i = 0; i < 4; i++)
            for (int j = 0; j < 4; j++)
                if (i != j) Assert.Equal(0, s.Covariance[i, j], 1e-6);
        Assert.Equal(1, result.Nodes.Sum(n => n.Weight), 1e-12);
    }

    [Fact]
    public void AnEmptyObservationWindowIsInformationAndLowersProductivity()
    {
        // exp(-K A) with no events over [0, 10] d pulls a below its prior mean; b, p and c stay near theirs.
        var data = new AftershockData(6.0, 3.0, 0.1, 0, 10, [], []);
        var s = RjPosterior.Compute(Prior, data).Summary;
        Assert.True(s.MeanA < Prior.Mean.A - 0.3, $"a = {s.MeanA}");
    }

    [Fact]
    public void RichSequenceGivesTheMaximumLikelihoodEstimateWithinOnePercent()
    {
        // 5,000-odd simulated events: the data overwhelm the prior, so the posterior mean and covariance approach the
        // MLE and its inverse-information covariance (Bernstein-von Mises).
        var truth = new RjParameters(-1.67, 1.0, 1.08, 0.05);
        var data = SequenceFixtures.Simulate(21, truth, 6.5, 2.0, 0, 100);
        var result = RjPosterior.Compute(Prior, data);
        Assert.InRange(result.EventCount, 4500, 5500);
        Assert.True(result.CoverageOk, result.Message);
        var fit = OmoriUtsu.Fit(data.TimesDays, 0, 100);
        Assert.Equal(OmoriFitStatus.Converged, fit.Status);
        var (mle, covariance) = Mle(data, fit);
        var s = result.Summary;
        double[] mean = [s.MeanA, s.MeanB, s.MeanP, s.MeanLog10C];
        for (int i = 0; i < 4; i++)
        {
            Assert.Equal(mle[i], mean[i], 0.01 * Math.Abs(mle[i]));
            double sdRatio = Math.Sqrt(s.Covariance[i, i] / covariance[i, i]);
            Assert.InRange(sdRatio, 0.9, 1.1);   // the prior still adds a few per cent of precision
            for (int j = 0; j < i; j++)
            {
                double rPost = s.Covariance[i, j] / Math.Sqrt(s.Covariance[i, i] * s.Covariance[j, j]);
                double rMle = covariance[i, j] / Math.Sqrt(covariance[i, i] * covariance[j, j]);
                Assert.Equal(rMle, rPost, 0.05);
            }
        }
    }

    [Fact]
    public void SameInputGivesBitwiseTheSameOutput()
    {
        var data = SequenceFixtures.Simulate(22, Prior.Mean, 6.0, 3.0, 0.1, 5);
        var first = RjPosterior.Compute(Prior, data);
        var second = RjPosterior.Compute(Prior, data);
        Assert.Equal(first.Nodes, second.Nodes);   // PosteriorNode is a record struct: exact double equality
        Assert.Equal(first.Summary.Covariance, second.Summary.Covariance);
        Assert.Equal(first.Summary.MeanA, second.Summary.MeanA);
    }

    [Fact]
    public void EventsOutsideTheFitWindowOrBelowMcAreIgnored()
    {
        var data = SequenceFixtures.Simulate(23, Prior.Mean, 6.0, 3.0, 0.2, 5);
        var padded = data with
        {
            TimesDays = [.. data.TimesDays, -1.0, 0.1, 6.0, 1.0],
            Magnitudes = [.. data.Magnitudes, 4.0, 4.0, 4.0, 2.9],
        };
        var reference = RjPosterior.Compute(Prior, data);
        var result = RjPosterior.Compute(Prior, padded);
        Assert.Equal(reference.EventCount, result.EventCount);
        Assert.Equal(reference.Nodes, result.Nodes);
    }

    [Fact]
    public void ASingleAftershockStillGivesAProperPosterior()
    {
        var data = new AftershockData(6.0, 3.0, 0.1, 0, 2, [0.4], [3.4]);
        var result = RjPosterior.Compute(Prior, data);
        Assert.Equal(1, result.EventCount);
        Assert.Equal(OmoriFitStatus.TooFewEvents, result.SequenceFit!.Status);
        Assert.True(result.CoverageOk, result.Message);
        Assert.True(double.IsFinite(result.Summary.MeanA) && result.Summary.SdP > 0);
    }

    [Fact]
    public void AllEventsAtOneMagnitudePullBUpButStayFinite()
    {
        // Every event in the Mc bin: S = n dM / 2 and the magnitude MLE is b = 2 / (dM ln 10) = 8.7; the prior keeps it sane.
        double[] times = SequenceFixtures.Simulate(24, Prior.Mean, 6.0, 3.0, 0, 10).TimesDays;
        var data = new AftershockData(6.0, 3.0, 0.1, 0, 10, times, times.Select(_ => 3.0).ToArray());
        var s = RjPosterior.Compute(Prior, data).Summary;
        Assert.True(s.MeanB > Prior.Mean.B && s.MeanB < 8.7, $"b = {s.MeanB}");
        Assert.True(double.IsFinite(s.SdB));
    }

    [Fact]
    public void UnknownOrInvalidInputsFailClearly()
    {
        var data = new AftershockData(6.0, 3.0, 0.1, 0, 2, [0.4, 0.5], [3.4]);
        Assert.Throws<ArgumentException>(() => RjPosterior.Compute(Prior, data));
        Assert.Throws<ArgumentException>(() => RjPosterior.Compute(Prior with { SigmaA = 0 }, AftershockData.None(6, 3)));
    }

    /// <summary>MLE of (a, b, p, log10 c) and its covariance: Omori fit (Ogata 1983) for (log10 K, log10 c, p), the
    /// magnitude likelihood n ln beta - beta S for b (variance b^2 / n), and a = log10 K - b (Mm - Mc).</summary>
    internal static (double[] Mle, double[,] Covariance) Mle(AftershockData data, OmoriFit fit)
    {
        var m = data.Magnitudes.Where((_, i) => data.TimesDays[i] >= data.SDays && data.TimesDays[i] <= data.TDays).ToArray();
        double sum = m.Sum(x => x - (data.Mc - data.BinWidth / 2));
        double b = m.Length / (Math.Log(10) * sum), varB = b * b / m.Length;
        double dm = data.MainshockMagnitude - data.Mc;
        var f = fit.Covariance!;   // (log10 K, log10 c, p)
        double[] mle = [Math.Log10(fit.K) - b * dm, b, fit.P, Math.Log10(fit.C)];
        var c = new double[4, 4];
        c[0, 0] = f[0, 0] + dm * dm * varB;
        c[1, 1] = varB;
        c[0, 1] = c[1, 0] = -dm * varB;
        c[2, 2] = f[2, 2];
        c[3, 3] = f[1, 1];
        c[0, 2] = c[2, 0] = f[0, 2];
        c[0, 3] = c[3, 0] = f[0, 1];
        c[2, 3] = c[3, 2] = f[1, 2];
        return (mle, c);
    }
}
