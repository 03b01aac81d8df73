namespace Forecast.Core.Catalog;

/// <summary>How magnitudes are rounded to bins: infer the bin width, find a magnitude's bin.</summary>
/// <remarks>
/// Bins are indexed by integers, <c>centre = index * binWidth</c>, so centres never drift by repeated addition.
/// A half-way magnitude goes to the upper bin; <see cref="BinIndex"/> adds a tolerance of
/// <see cref="BinTolerance"/> bins so that 2.35 stored as 2.34999999 still lands in the 2.4 bin.
/// </remarks>
public static class MagnitudeBinning
{
    /// <summary>The usual bin width of catalog magnitudes (common practice), returned when the data cannot
    /// decide.</summary>
    public const double DefaultBinWidth = 0.1;

    /// <summary>Fraction of a bin within which a value counts as lying on the bin grid (floating noise).</summary>
    public const double BinTolerance = 1e-3;

    /// <summary>
    /// Below this many magnitudes a width coarser than <see cref="DefaultBinWidth"/> is not believed:
    /// 0.1-binned values all fall on the 0.2 grid by chance with probability about 0.5^n (0.2^n for 0.5),
    /// which is below 1e-6 only from about 20 values on. Project choice.
    /// </summary>
    public const int MinCountForCoarseWidth = 20;

    // Coarsest first: the coarsest grid all values sit on is the bin width.
    static readonly double[] CandidateWidths = [0.5, 0.2, 0.1, 0.05, 0.01];

    /// <summary>The bin width the magnitudes were rounded to: 0.5, 0.2, 0.1, 0.05 or 0.01.</summary>
    /// <returns>
    /// The coarsest candidate width on whose grid every magnitude lies (within <see cref="BinTolerance"/> of a bin);
    /// <see cref="DefaultBinWidth"/> when the span is empty, when no candidate fits (magnitudes with more
    /// decimals, or continuous values), or when a coarser width than 0.1 fits fewer than
    /// <see cref="MinCountForCoarseWidth"/> values.
    /// </returns>
    /// <exception cref="ArgumentException">A magnitude is NaN or infinite.</exception>
    public static double InferBinWidth(ReadOnlySpan<double> magnitudes)
    {
        Guard.AllFinite(magnitudes, nameof(magnitudes));
        if (magnitudes.IsEmpty) return DefaultBinWidth;

        foreach (var width in CandidateWidths)
        {
            if (!AllOnGrid(magnitudes, width)) continue;
            if (width > DefaultBinWidth && magnitudes.Length < MinCountForCoarseWidth) return DefaultBinWidth;
            return width;
        }
        return DefaultBinWidth;
    }

    /// <summary>Integer index of the bin holding <paramref name="magnitude"/>: <c>round(magnitude / binWidth)</c>,
    /// half-way values rounded up.</summary>
    public static long BinIndex(double magnitude, double binWidth) =>
        (long)Math.Floor(magnitude / binWidth + 0.5 + BinTolerance);

    /// <summary>Centre of bin <paramref name="index"/>: <c>index * binWidth</c>, rounded to 10 decimals so that
    /// bin 19 of 0.1 prints and compares as 1.9, not 1.9000000000000001.</summary>
    public static double BinCentre(long index, double binWidth) => Math.Round(index * binWidth, 10);

    /// <summary>The bin centre nearest to <paramref name="magnitude"/>.</summary>
    public static double RoundToBin(double magnitude, double binWidth) =>
        BinCentre(BinIndex(magnitude, binWidth), binWidth);

    static bool AllOnGrid(ReadOnlySpan<double> magnitudes, double width)
    {
        foreach (var m in magnitudes)
        {
            var units = m / width;
            if (Math.Abs(units - Math.Round(units)) > BinTolerance) return false;
        }
        return true;
    }
}
