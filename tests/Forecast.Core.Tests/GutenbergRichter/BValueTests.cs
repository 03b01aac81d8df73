using Forecast.Core.GutenbergRichter;
using MathNet.Numerics.Random;

namespace Forecast.Core.Tests.GutenbergRichter;

/// <summary>Seeded Gutenberg-Richter magnitudes for tests: exponential with beta = b ln 10 above the lower bin edge
/// Mc - dM/2, rounded to the bin (so the bin index is exactly geometric with ratio 10^(-b dM)).</summary>
internal static class SyntheticMagnitudes
{
    public static double[] GutenbergRichter(int n, double b, double mc, double binWidth, int seed)
    {
        var random = new MersenneTwister(seed);
        var beta = b * Math.Log(10);
        var lowerEdge = mc - binWidth / 2;
        var magnitudes = new double[n];
        for (var i = 0; i < n; i++)
        {
            var m = lowerEdge - Math.Log(1 - random.NextDouble()) / beta;
            magnitudes[i] = Math.Round(Math.Floor(m / binWidth + 0.5) * binWidth, 6);
        }
        return magnitudes;
    }
}

public class BValueTests
{
    static readonly double[] SmallSet = [2.0, 2.1, 2.3, 2.5];

    [Fact]
    public void AkiUtsuFollowsItsFormulaOnASmallSet()
    {
        // Aki (1965) with Utsu's half bin: mean 2.225, Mc - dM/2 = 1.95, b = log10(e) / 0.275 = 1.579253 (by hand).
        var estimate = BValue.AkiUtsu(SmallSet, mc: 2.0, binWidth: 0.1);

        Assert.Equal(1.579253, estimate.B, 1e-6);
        Assert.Equal(4, estimate.Count);
    }

    [Fact]
    public void TintiMulargiaFollowsItsFormulaOnASmallSet()
    {
        // Tinti & Mulargia (1987): b = ln(1 + 0.1 / 0.225) / (0.1 ln 10) = 1.597008 (by hand).
        var estimate = BValue.TintiMulargia(SmallSet, mc: 2.0, binWidth: 0.1);

        Assert.Equal(1.597008, estimate.B, 1e-6);
    }

    [Fact]
    public void ShiBoltSigmaFollowsItsFormulaOnASmallSet()
    {
        // Shi & Bolt (1982): sum (M - mean)^2 = 0.1475, sqrt(0.1475 / 12) = 0.110868;
        // sigma = ln 10 * 1.579253^2 * 0.110868 = 0.636685 (by hand, ln 10 in place of the paper's 2.30).
        var estimate = BValue.AkiUtsu(SmallSet, mc: 2.0, binWidth: 0.1);

        Assert.Equal(0.636685, estimate.Sigma, 1e-6);
    }

    [Fact]
    public void ExactBinnedEstimatorIsExactlyOneAtTheExpectedMeanOfBinnedUnitBData()
    {
        // Binned b = 1 magnitudes are geometric in the bin index with q = 10^(-0.1); the expected index is
        // q / (1 - q) = 3.862116, so E[mean - Mmin] = 0.3862116 (Tinti & Mulargia 1987). At that mean their
        // estimator returns b = 1 exactly, and Aki-Utsu returns log10(e) / (0.3862116 + 0.05) = 0.995605
        // (computed here; METHODS.md: "about 0.4 % low at b = 1").
        var q = Math.Pow(10, -0.1);
        var meanAboveMmin = 0.1 * q / (1 - q);
        var summary = new MagnitudeSummary(Count: 10_000, SumExcess: 10_000 * (meanAboveMmin + 0.05),
            Mean: 2.0 + meanAboveMmin, SumSquaredDeviations: 1000, Mc: 2.0, LowestBinCentre: 2.0, BinWidth: 0.1);

        Assert.Equal(1.0, BValue.TintiMulargia(summary).B, 1e-9);
        Assert.Equal(0.995605, BValue.AkiUtsu(summary).B, 1e-6);
    }

    [Theory]
    [InlineData(1.0, 11)]
    [InlineData(0.8, 12)]
    [InlineData(1.3, 13)]
    public void TintiMulargiaRecoversTheBOfSyntheticMagnitudesWithinTwoSigma(double b, int seed)
    {
        // Seeded synthetic Gutenberg-Richter data (generator above); 2 sigma is the usual 95 % band.
        var magnitudes = SyntheticMagnitudes.GutenbergRichter(5000, b, mc: 2.0, binWidth: 0.1, seed);

        var estimate = BValue.TintiMulargia(magnitudes, mc: 2.0, binWidth: 0.1);

        Assert.InRange(estimate.B, b - 2 * estimate.Sigma, b + 2 * estimate.Sigma);
    }

    [Fact]
    public void TintiMulargiaIsUnbiasedOverManyReplicas()
    {
        // 200 seeded replicas of 500 events at b = 1: the mean of the estimates lies within two standard errors
        // of 1 (the MLE's small-sample bias, about b / n = 0.002, is well inside that band).
        var estimates = Enumerable.Range(0, 200)
            .Select(seed => BValue.TintiMulargia(
                SyntheticMagnitudes.GutenbergRichter(500, 1.0, 2.0, 0.1, 1000 + seed), 2.0, 0.1).B)
            .ToArray();
        var mean = estimates.Average();
        var standardError = Math.Sqrt(estimates.Sum(x => (x - mean) * (x - mean)) / (estimates.Length - 1))
            / Math.Sqrt(estimates.Length);

        Assert.InRange(mean, 1 - 2 * standardError, 1 + 2 * standardError);
    }

    [Fact]
    public void EstimateUsesTintiMulargiaAndReportsAkiUtsuBeside()
    {
        var magnitudes = SyntheticMagnitudes.GutenbergRichter(2000, 1.0, 2.0, 0.1, seed: 5);

        var result = BValue.Estimate(magnitudes, mc: 2.0, binWidth: 0.1);

        Assert.False(result.UsesGenericB);
        Assert.Equal("", result.Reason);
        Assert.Equal(result.TintiMulargiaB, result.B);
        Assert.Equal(BValue.AkiUtsu(magnitudes, 2.0, 0.1).B, result.AkiUtsuB, 1e-12);
        // Aki-Utsu is the first-order approximation and reads low for 0.1 bins (Tinti & Mulargia 1987).
        Assert.True(result.AkiUtsuB < result.TintiMulargiaB);
        Assert.Equal(2000, result.Count);
    }

    [Fact]
    public void EstimateFallsBackToTheGenericBWithFewerThanFiftyEvents()
    {
        // 50 events is common practice for a stand-alone b; 0.91 is Reasenberg & Jones (1989), from memory.
        var magnitudes = SyntheticMagnitudes.GutenbergRichter(30, 1.0, 2.0, 0.1, seed: 6);

        var result = BValue.Estimate(magnitudes, mc: 2.0, binWidth: 0.1);

        Assert.True(result.UsesGenericB);
        Assert.Equal(0.91, result.B);
        Assert.Contains("fewer than 50", result.Reason);
        Assert.True(double.IsFinite(result.TintiMulargiaB)); // still reported
    }

    [Fact]
    public void AllMagnitudesInOneBinMakeBInfiniteAndEstimateFallsBack()
    {
        var magnitudes = Enumerable.Repeat(3.0, 60).ToArray();

        var exact = BValue.TintiMulargia(magnitudes, 3.0, 0.1);
        var result = BValue.Estimate(magnitudes, 3.0, 0.1);

        Assert.Equal(double.PositiveInfinity, exact.B);
        Assert.Contains("lowest bin", exact.Note);
        Assert.True(result.UsesGenericB);
        Assert.Equal(BValue.GenericB, result.B);
        Assert.Contains("lowest bin", result.Reason);
    }

    [Fact]
    public void NoEventsAboveMcGiveNaNAndAFallback()
    {
        var result = BValue.Estimate([1.0, 1.5], mc: 2.0, binWidth: 0.1);

        Assert.Equal(0, result.Count);
        Assert.True(double.IsNaN(result.TintiMulargiaB));
        Assert.True(result.UsesGenericB);
        Assert.Contains("No magnitudes", result.Reason);
    }

    [Fact]
    public void OneEventAboveTheLowestBinHasABValueButNoSigma()
    {
        // b = ln(1 + 0.1 / 0.3) / (0.1 ln 10) = 1.249387 (by hand); Shi-Bolt needs n >= 2.
        var estimate = BValue.TintiMulargia([2.3], mc: 2.0, binWidth: 0.1);

        Assert.Equal(1.249387, estimate.B, 1e-6);
        Assert.True(double.IsNaN(estimate.Sigma));
    }

    [Fact]
    public void InputOrderDoesNotMatter()
    {
        var magnitudes = SyntheticMagnitudes.GutenbergRichter(300, 1.0, 2.0, 0.1, seed: 7);
        var sorted = magnitudes.Order().ToArray();

        Assert.Equal(BValue.TintiMulargia(magnitudes, 2.0, 0.1).B, BValue.TintiMulargia(sorted, 2.0, 0.1).B, 1e-12);
    }

    [Fact]
    public void McIsRoundedToTheBinGridBeforeSelecting()
    {
        // Mc 2.03 rounds to the 2.0 bin, so the 2.0 events stay in: same answer as Mc = 2.0.
        Assert.Equal(BValue.AkiUtsu(SmallSet, 2.0, 0.1).B, BValue.AkiUtsu(SmallSet, 2.03, 0.1).B, 1e-12);
    }

    [Fact]
    public void NaNMagnitudesAreRejected()
    {
        Assert.Throws<ArgumentException>(() => BValue.TintiMulargia([2.0, double.NaN], 2.0, 0.1));
        Assert.Throws<ArgumentException>(() => BValue.Estimate([2.0], double.NaN, 0.1));
        Assert.Throws<ArgumentException>(() => BValue.AkiUtsu([2.0], 2.0, -0.1));
    }

    [Fact]
    public void LogLikelihoodFollowsItsFormula()
    {
        // n ln(beta) - beta S with beta = ln 10, n = 10, S = 4.343: 10 * 0.834032 - 2.302585 * 4.343 = -1.659803.
        Assert.Equal(-1.659803, BValue.LogLikelihood(1.0, 10, 4.343), 1e-6);
    }

    [Fact]
    public void LogLikelihoodPeaksAtTheAkiUtsuB()
    {
        // d/dbeta (n ln beta - beta S) = 0 at beta = n / S, i.e. b = log10(e) / (S / n): the Aki-Utsu estimate.
        var summary = MagnitudeSummary.Of(SyntheticMagnitudes.GutenbergRichter(400, 1.0, 2.0, 0.1, 8), 2.0, 0.1);
        var peak = BValue.AkiUtsu(summary).B;

        double L(double b) => BValue.LogLikelihood(b, summary.Count, summary.SumExcess);

        Assert.True(L(peak) > L(peak - 0.01));
        Assert.True(L(peak) > L(peak + 0.01));
    }
}

public class MagnitudeSummaryTests
{
    [Fact]
    public void OfKeepsEventsAtOrAboveMcAndSumsTheExcessOverTheLowerBinEdge()
    {
        // Above Mc = 2.0: 2.0, 2.1, 2.3, 2.5 (1.9 dropped); S = sum (M - 1.95) = 0.05 + 0.15 + 0.35 + 0.55 = 1.1.
        var summary = MagnitudeSummary.Of([2.3, 1.9, 2.0, 2.5, 2.1], mc: 2.0, binWidth: 0.1);

        Assert.Equal(4, summary.Count);
        Assert.Equal(1.1, summary.SumExcess, 1e-12);
        Assert.Equal(2.225, summary.Mean, 1e-12);
        Assert.Equal(0.1475, summary.SumSquaredDeviations, 1e-12);
        Assert.Equal(1.95, summary.LowerEdge, 1e-12);
    }

    [Fact]
    public void OfAnEmptySpanHasZeroCountAndNaNMean()
    {
        var summary = MagnitudeSummary.Of([], 2.0, 0.1);

        Assert.Equal(0, summary.Count);
        Assert.True(double.IsNaN(summary.Mean));
    }
}

public class GutenbergRichterLawTests
{
    [Fact]
    public void AValueAndCountAtOrAboveInvertEachOther()
    {
        // log10 N = a - b M (Gutenberg & Richter): 100 events at or above M 2 with b = 1 give a = 4, and 10 above M 3.
        var a = GutenbergRichterLaw.AValue(100, b: 1.0, mc: 2.0);

        Assert.Equal(4.0, a, 1e-12);
        Assert.Equal(10.0, GutenbergRichterLaw.CountAtOrAbove(a, 1.0, 3.0), 1e-9);
    }

    [Theory]
    [InlineData(1.0, 3.0, 5.0, 0.01)]
    [InlineData(0.91, 5.0, 6.0, 0.1230269)] // 10^(-0.91)
    [InlineData(1.0, 5.0, 4.0, 10.0)]
    public void ScaleFactorIsTenToTheMinusBTimesTheMagnitudeStep(double b, double from, double to, double expected)
    {
        Assert.Equal(expected, GutenbergRichterLaw.ScaleFactor(b, from, to), 1e-6);
    }
}
