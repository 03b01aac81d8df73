using Forecast.Core.Catalog;

namespace Forecast.Core.Tests.Catalog;

public class MagnitudeBinningTests
{
    [Theory]
    [InlineData(0.01)]
    [InlineData(0.05)]
    [InlineData(0.1)]
    [InlineData(0.2)]
    [InlineData(0.5)]
    public void InferBinWidthFindsTheGridTheMagnitudesWereRoundedTo(double width)
    {
        // 40 values k * width for k = 20..59, computed by multiplication so they carry floating noise.
        var magnitudes = Enumerable.Range(20, 40).Select(k => k * width).ToArray();

        Assert.Equal(width, MagnitudeBinning.InferBinWidth(magnitudes), 1e-12);
    }

    [Fact]
    public void InferBinWidthToleratesSinglePrecisionNoise()
    {
        // (double)2.3f = 2.2999999523...: a magnitude stored as float by some upstream system.
        var magnitudes = Enumerable.Range(0, 30).Select(k => (double)(float)(2.0 + 0.1 * k + 0.1)).ToArray();

        Assert.Equal(0.1, MagnitudeBinning.InferBinWidth(magnitudes), 1e-12);
    }

    [Fact]
    public void InferBinWidthDefaultsToATenthForAnEmptySpan()
    {
        Assert.Equal(MagnitudeBinning.DefaultBinWidth, MagnitudeBinning.InferBinWidth([]));
    }

    [Fact]
    public void InferBinWidthDoesNotBelieveACoarseGridFromAFewValues()
    {
        // Three 0.1-binned values that happen to sit on the 0.5 grid: too few to tell (threshold 20, project choice).
        Assert.Equal(0.1, MagnitudeBinning.InferBinWidth([2.0, 2.5, 3.0]), 1e-12);
    }

    [Fact]
    public void InferBinWidthDefaultsToATenthWhenNoCandidateGridFits()
    {
        // Three decimals fit none of 0.5, 0.2, 0.1, 0.05, 0.01.
        Assert.Equal(0.1, MagnitudeBinning.InferBinWidth([2.347, 3.112, 2.901]), 1e-12);
    }

    [Fact]
    public void InferBinWidthRejectsNaN()
    {
        Assert.Throws<ArgumentException>(() => MagnitudeBinning.InferBinWidth([2.0, double.NaN]));
    }

    [Theory]
    [InlineData(2.35, 0.1, 2.4)] // half-way rounds up (documented rule)
    [InlineData(2.3499999999, 0.1, 2.4)] // floating noise below a half-way value still rounds up
    [InlineData(2.34, 0.1, 2.3)]
    [InlineData(-0.04, 0.1, 0.0)]
    [InlineData(-0.26, 0.1, -0.3)]
    [InlineData(3.12, 0.05, 3.1)]
    public void RoundToBinGoesToTheNearestBinCentre(double magnitude, double width, double expected)
    {
        Assert.Equal(expected, MagnitudeBinning.RoundToBin(magnitude, width), 1e-12);
    }
}
