namespace Forecast.Core.Catalog;

/// <summary>Frequency-magnitude distribution: every bin from the smallest to the largest magnitude, empty bins
/// included.</summary>
/// <param name="BinWidth">Magnitude bin width the counts use.</param>
/// <param name="BinCentres">Bin centres in increasing order.</param>
/// <param name="IncrementalCounts">Number of events in each bin (non-cumulative).</param>
/// <param name="CumulativeCounts">Number of events in this bin or above, N(M &gt;= centre).</param>
public sealed record FrequencyMagnitudeDistribution(
    double BinWidth,
    IReadOnlyList<double> BinCentres,
    IReadOnlyList<int> IncrementalCounts,
    IReadOnlyList<int> CumulativeCounts)
{
    /// <summary>Total number of events.</summary>
    public int Count => CumulativeCounts.Count == 0 ? 0 : CumulativeCounts[0];

    /// <summary>Bins <paramref name="magnitudes"/> (any order) at <paramref name="binWidth"/>; see
    /// <see cref="MagnitudeBinning.BinIndex"/> for the rounding rule.</summary>
    /// <exception cref="ArgumentException">A magnitude is not finite, or the bin width is not above zero.</exception>
    public static FrequencyMagnitudeDistribution Compute(ReadOnlySpan<double> magnitudes, double binWidth)
    {
        Guard.AllFinite(magnitudes, nameof(magnitudes));
        Guard.Positive(binWidth, nameof(binWidth));
        if (magnitudes.IsEmpty) return new(binWidth, [], [], []);

        var (lowIndex, counts) = Histogram(magnitudes, binWidth);
        var centres = new double[counts.Length];
        var cumulative = new int[counts.Length];
        var above = 0;
        for (var k = counts.Length - 1; k >= 0; k--)
        {
            above += counts[k];
            cumulative[k] = above;
            centres[k] = MagnitudeBinning.BinCentre(lowIndex + k, binWidth);
        }
        return new(binWidth, centres, counts, cumulative);
    }

    /// <summary>Counts per bin, starting at bin index <c>lowIndex</c>. Inputs are assumed checked.</summary>
    internal static (long lowIndex, int[] counts) Histogram(ReadOnlySpan<double> magnitudes, double binWidth)
    {
        long low = long.MaxValue, high = long.MinValue;
        foreach (var m in magnitudes)
        {
            var k = MagnitudeBinning.BinIndex(m, binWidth);
            low = Math.Min(low, k);
            high = Math.Max(high, k);
        }
        var counts = new int[checked((int)(high - low + 1))];
        foreach (var m in magnitudes) counts[MagnitudeBinning.BinIndex(m, binWidth) - low]++;
        return (low, counts);
    }
}
