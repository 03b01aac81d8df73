using Forecast.Core.Completeness;
using Forecast.Core.Tests.GutenbergRichter;
using MathNet.Numerics.Random;

namespace Forecast.Core.Tests.Completeness;

/// <summary>Seeded catalogs complete above a known Mc and thinned below it.</summary>
internal static class IncompleteCatalogs
{
    /// <summary>b = 1 magnitudes from 1.0 up, complete at and above 2.0; below, an event is kept with probability
    /// 10^(-2 (2.0 - M)) (a taper: 63 % at 1.9, 1 % at 1.0). The incremental counts then peak in the 2.0 bin.</summary>
    public static double[] TaperedBelowTwo(int n, int seed)
    {
        var random = new MersenneTwister(seed + 100);
        return SyntheticMagnitudes.GutenbergRichter(n, 1.0, 1.0, 0.1, seed)
            .Where(m => m >= 2.0 - 1e-9 || random.NextDouble() < Math.Pow(10, -2 * (2.0 - m)))
            .ToArray();
    }
}

public class MaximumCurvatureTests
{
    [Fact]
    public void ModeBinCentreIsTheMostPopulatedBin()
    {
        // Hand count: 1.8 x1, 1.9 x3, 2.0 x5, 2.1 x2, 2.5 x1 (unsorted on purpose).
        double[] magnitudes = [2.0, 1.9, 2.0, 2.1, 2.0, 1.8, 2.5, 2.0, 1.9, 2.1, 1.9, 2.0];

        Assert.Equal(2.0, MaximumCurvature.ModeBinCentre(magnitudes, 0.1), 1e-12);
    }

    [Fact]
    public void EstimateAddsTheWoessnerWiemerCorrectionToTheMode()
    {
        // Woessner & Wiemer (2005): Mc = MAXC + 0.2. The tapered catalog peaks in the 2.0 bin by construction.
        var magnitudes = IncompleteCatalogs.TaperedBelowTwo(20_000, seed: 2);

        var estimate = MaximumCurvature.Estimate(magnitudes, 0.1, bootstrapSamples: 50, seed: 1);

        Assert.Equal(2.2, estimate.Mc, 1e-12);
        Assert.Equal(CompletenessMethod.MaximumCurvature, estimate.Method);
        Assert.Equal(magnitudes.Length, estimate.Count);
        Assert.Equal(magnitudes.Count(m => m >= 2.2 - 1e-9), estimate.CountAtOrAboveMc);
    }

    [Fact]
    public void TiesGoToTheHigherBin()
    {
        // Project choice: the more cautious (higher) Mc when two bins share the largest count.
        Assert.Equal(2.1, MaximumCurvature.ModeBinCentre([2.0, 2.0, 2.1, 2.1, 1.9], 0.1), 1e-12);
    }

    [Fact]
    public void BootstrapIsDeterministicForASeed()
    {
        var magnitudes = IncompleteCatalogs.TaperedBelowTwo(3000, seed: 4);

        var first = MaximumCurvature.Estimate(magnitudes, 0.1, bootstrapSamples: 100, seed: 42);
        var second = MaximumCurvature.Estimate(magnitudes, 0.1, bootstrapSamples: 100, seed: 42);

        Assert.Equal(first, second);
        Assert.True(first.Sigma >= 0);
    }

    [Fact]
    public void FewerThanTwoBootstrapSamplesLeaveSigmaUndefined()
    {
        var estimate = MaximumCurvature.Estimate([2.0, 2.1, 2.1], 0.1, bootstrapSamples: 0);

        Assert.True(double.IsNaN(estimate.Sigma));
        Assert.Equal(2.3, estimate.Mc, 1e-12); // mode 2.1 + 0.2
    }

    [Fact]
    public void EmptyInputGivesNaNMcWithANote()
    {
        var estimate = MaximumCurvature.Estimate([], 0.1);

        Assert.True(double.IsNaN(estimate.Mc));
        Assert.NotEmpty(estimate.Note);
    }

    [Fact]
    public void NaNAndNegativeBootstrapCountsAreRejected()
    {
        Assert.Throws<ArgumentException>(() => MaximumCurvature.Estimate([2.0, double.NaN], 0.1));
        Assert.Throws<ArgumentOutOfRangeException>(() => MaximumCurvature.Estimate([2.0], 0.1, bootstrapSamples: -1));
    }
}

public class GoodnessOfFitTests
{
    [Theory]
    [InlineData(20_000, 2)]
    [InlineData(20_000, 1)]
    [InlineData(5_000, 3)]
    public void EstimateFindsTheKnownMcOfATaperedCatalogWithinOneBin(int n, int seed)
    {
        // Complete from 2.0 by construction; Wiemer & Wyss (2000) GFT should land within one 0.1 bin of it.
        var magnitudes = IncompleteCatalogs.TaperedBelowTwo(n, seed);

        var estimate = GoodnessOfFit.Estimate(magnitudes, 0.1, bootstrapSamples: 50, seed: 1);

        Assert.InRange(estimate.Mc, 1.9 - 1e-9, 2.1 + 1e-9);
        Assert.Equal(CompletenessMethod.GoodnessOfFit95, estimate.Method);
        Assert.True(estimate.Residual >= 95);
    }

    [Fact]
    public void TrialsBelowTheTaperFitBadly()
    {
        // At Mc = 1.0 the events the taper removed leave the model far off (R about 63 % in this seed): below 90 %.
        var trials = GoodnessOfFit.Trials(IncompleteCatalogs.TaperedBelowTwo(20_000, 2), 0.1);

        Assert.Equal(1.0, trials[0].Mc, 1e-12);
        Assert.True(trials[0].ResidualPercent < 80);
    }

    [Fact]
    public void McAtLevelReturnsNaNWhenTheLevelIsNeverReached()
    {
        var magnitudes = IncompleteCatalogs.TaperedBelowTwo(20_000, 2);

        Assert.True(double.IsNaN(GoodnessOfFit.McAtLevel(magnitudes, 0.1, levelPercent: 99.9)));
        Assert.InRange(GoodnessOfFit.McAtLevel(magnitudes, 0.1, levelPercent: 90), 1.8 - 1e-9, 2.1 + 1e-9);
    }

    [Fact]
    public void EstimateFallsBackToMaximumCurvatureWhenNoTrialFits()
    {
        // Uniform magnitudes on 2.0-4.0 are not Gutenberg-Richter: R stays near 82 % up to 3.5. Only the top two
        // or three bins fit (trivially, with one parameter for as many bins), so trials need 100 events here.
        var random = new MersenneTwister(9);
        var uniform = Enumerable.Range(0, 500).Select(_ => Math.Round(2.0 + random.NextDouble() * 2, 1)).ToArray();

        var estimate = GoodnessOfFit.Estimate(uniform, 0.1, bootstrapSamples: 20, seed: 1, minEventsAboveMc: 100);

        Assert.Equal(CompletenessMethod.MaximumCurvatureFallback, estimate.Method);
        Assert.Equal(MaximumCurvature.ModeBinCentre(uniform, 0.1) + 0.2, estimate.Mc, 1e-9);
        Assert.Contains("neither", estimate.Note);
    }

    [Fact]
    public void BootstrapIsDeterministicForASeedAndVariesWithIt()
    {
        var magnitudes = IncompleteCatalogs.TaperedBelowTwo(2000, seed: 4);

        var first = GoodnessOfFit.Estimate(magnitudes, 0.1, bootstrapSamples: 100, seed: 7);
        var again = GoodnessOfFit.Estimate(magnitudes, 0.1, bootstrapSamples: 100, seed: 7);
        var other = GoodnessOfFit.Estimate(magnitudes, 0.1, bootstrapSamples: 100, seed: 8);

        Assert.Equal(first, again);
        Assert.True(first.Sigma > 0);
        Assert.NotEqual(first.Sigma, other.Sigma);
    }

    [Fact]
    public void EmptyInputGivesNaNMc()
    {
        Assert.True(double.IsNaN(GoodnessOfFit.Estimate([], 0.1).Mc));
    }

    [Fact]
    public void BadArgumentsAreRejected()
    {
        Assert.Throws<ArgumentException>(() => GoodnessOfFit.Estimate([double.NaN], 0.1));
        Assert.Throws<ArgumentException>(() => GoodnessOfFit.McAtLevel([2.0], 0.1, levelPercent: 120));
    }
}

public class FitStartTests
{
    [Theory]
    [InlineData(7.0, 2.5, 1.0)] // 10^((7 - 4.5 - 2.5) / 0.75) = 10^0
    [InlineData(7.5, 2.25, 10.0)] // 10^(0.75 / 0.75)
    [InlineData(6.0, 3.0, 0.01)] // 10^(-1.5 / 0.75) = 10^-2
    [InlineData(9.0, 2.0, 2154.43469)] // 10^(2.5 / 0.75) = 10^3.3333 (no ceiling applied)
    public void Helmstetter2006FollowsItsFormula(double mainshockMagnitude, double mc, double expectedDays)
    {
        // Helmstetter, Kagan & Jackson (2006): S = 10^((Mm - 4.5 - Mc) / 0.75) days; values by hand.
        Assert.Equal(expectedDays, FitStart.Helmstetter2006(mainshockMagnitude, mc), expectedDays * 1e-9);
    }

    [Fact]
    public void McAfterMainshockInvertsTheFitStart()
    {
        var startDays = FitStart.Helmstetter2006(6.8, 2.7);

        Assert.Equal(2.7, FitStart.McAfterMainshock(6.8, startDays), 1e-12);
    }

    [Fact]
    public void NaNMagnitudesAndNonPositiveTimesAreRejected()
    {
        Assert.Throws<ArgumentException>(() => FitStart.Helmstetter2006(double.NaN, 2.0));
        Assert.Throws<ArgumentException>(() => FitStart.McAfterMainshock(7.0, 0));
    }
}
