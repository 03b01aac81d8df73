using Forecast.Core.Catalog;

namespace Forecast.Core.Tests.Catalog;

public class FrequencyMagnitudeDistributionTests
{
    [Fact]
    public void ComputeCountsEveryBinIncludingEmptyOnesFromUnsortedInput()
    {
        // Hand count: 2.0 x3, 2.1 x2, 2.2 x0, 2.3 x1.
        var fmd = FrequencyMagnitudeDistribution.Compute([2.1, 2.0, 2.3, 2.0, 2.1, 2.0], 0.1);

        Assert.Equal([2.0, 2.1, 2.2, 2.3], fmd.BinCentres.Select(c => Math.Round(c, 9)));
        Assert.Equal([3, 2, 0, 1], fmd.IncrementalCounts);
        Assert.Equal([6, 3, 1, 1], fmd.CumulativeCounts);
        Assert.Equal(6, fmd.Count);
    }

    [Fact]
    public void ComputeGivesNoBinsForNoMagnitudes()
    {
        var fmd = FrequencyMagnitudeDistribution.Compute([], 0.1);

        Assert.Empty(fmd.BinCentres);
        Assert.Equal(0, fmd.Count);
    }

    [Fact]
    public void ComputeGivesOneBinForOneEvent()
    {
        var fmd = FrequencyMagnitudeDistribution.Compute([4.2], 0.1);

        Assert.Equal(4.2, Assert.Single(fmd.BinCentres), 1e-12);
        Assert.Equal([1], fmd.CumulativeCounts);
    }

    [Fact]
    public void ComputeRejectsNaNAndABadBinWidth()
    {
        Assert.Throws<ArgumentException>(() => FrequencyMagnitudeDistribution.Compute([double.NaN], 0.1));
        Assert.Throws<ArgumentException>(() => FrequencyMagnitudeDistribution.Compute([2.0], 0));
    }
}
