using Forecast.Core.Catalog;

namespace Forecast.Core.GutenbergRichter;

/// <summary>The sufficient statistics of binned magnitudes at or above a completeness magnitude: what the
/// b-value estimators and the Gamma-conjugate posterior for beta = b ln 10 need.</summary>
/// <param name="Count">n, the number of magnitudes in the bin of <paramref name="LowestBinCentre"/> or above.</param>
/// <param name="SumExcess">S = sum (M_i - (Mmin - dM/2)), magnitude units: the excess over the lower bin edge.</param>
/// <param name="Mean">Mean of the selected magnitudes (NaN when n = 0).</param>
/// <param name="SumSquaredDeviations">sum (M_i - mean)^2, for the Shi &amp; Bolt (1982) sigma.</param>
/// <param name="Mc">The completeness magnitude asked for.</param>
/// <param name="LowestBinCentre">Mmin: <paramref name="Mc"/> rounded to the bin grid.</param>
/// <param name="BinWidth">dM.</param>
public sealed record MagnitudeSummary(
    int Count, double SumExcess, double Mean, double SumSquaredDeviations,
    double Mc, double LowestBinCentre, double BinWidth)
{
    /// <summary>Lower edge of the lowest bin, Mmin - dM/2: the origin of the exponential in Aki-Utsu.</summary>
    public double LowerEdge => LowestBinCentre - BinWidth / 2;

    /// <summary>Mean - Mmin, the quantity the exact binned estimator uses (NaN when n = 0).</summary>
    public double MeanAboveLowestBin => Mean - LowestBinCentre;

    /// <summary>Summarises the magnitudes whose bin centre is at or above <paramref name="mc"/> rounded to the bin
    /// grid (so <c>mc = 2.03</c> with 0.1 bins keeps the 2.0 bin). Order of input does not matter.</summary>
    /// <exception cref="ArgumentException">A magnitude or <paramref name="mc"/> is not finite, or the bin width is
    /// not above zero.</exception>
    public static MagnitudeSummary Of(ReadOnlySpan<double> magnitudes, double mc, double binWidth)
    {
        Guard.AllFinite(magnitudes, nameof(magnitudes));
        Guard.Finite(mc, nameof(mc));
        Guard.Positive(binWidth, nameof(binWidth));

        var lowIndex = MagnitudeBinning.BinIndex(mc, binWidth);
        var mmin = MagnitudeBinning.BinCentre(lowIndex, binWidth);
        int n = 0;
        double sum = 0;
        foreach (var m in magnitudes)
        {
            if (MagnitudeBinning.BinIndex(m, binWidth) < lowIndex) continue;
            n++;
            sum += m;
        }
        if (n == 0) return new(0, 0, double.NaN, double.NaN, mc, mmin, binWidth);

        var mean = sum / n;
        double squares = 0;
        foreach (var m in magnitudes)
        {
            if (MagnitudeBinning.BinIndex(m, binWidth) < lowIndex) continue;
            squares += (m - mean) * (m - mean);
        }
        var sumExcess = sum - n * (mmin - binWidth / 2);
        return new(n, sumExcess, mean, squares, mc, mmin, binWidth);
    }
}
