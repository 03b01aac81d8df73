using Forecast.Core.Catalog;

namespace Forecast.Core.GutenbergRichter;

/// <summary>The Gutenberg-Richter relation <c>log10 N(&gt;= M) = a - b M</c> (Gutenberg &amp; Richter 1944,
/// BSSA 34, 185-188, from memory) and the scalings it implies.</summary>
public static class GutenbergRichterLaw
{
    /// <summary>a-value from the count at or above <paramref name="mc"/>: <c>a = log10 N + b Mc</c>.</summary>
    /// <exception cref="ArgumentException">A count below 1, or b / Mc not finite.</exception>
    public static double AValue(int countAtOrAboveMc, double b, double mc)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(countAtOrAboveMc, 1);
        Guard.Finite(b, nameof(b));
        Guard.Finite(mc, nameof(mc));
        return Math.Log10(countAtOrAboveMc) + b * mc;
    }

    /// <summary>Expected count at or above <paramref name="magnitude"/>: <c>10^(a - b M)</c>.</summary>
    public static double CountAtOrAbove(double a, double b, double magnitude)
    {
        Guard.Finite(a, nameof(a));
        Guard.Finite(b, nameof(b));
        Guard.Finite(magnitude, nameof(magnitude));
        return Math.Pow(10, a - b * magnitude);
    }

    /// <summary>Factor that turns a count or rate at or above <paramref name="fromMagnitude"/> into one at or above
    /// <paramref name="toMagnitude"/>: <c>10^(-b (to - from))</c>.</summary>
    public static double ScaleFactor(double b, double fromMagnitude, double toMagnitude)
    {
        Guard.Finite(b, nameof(b));
        Guard.Finite(fromMagnitude, nameof(fromMagnitude));
        Guard.Finite(toMagnitude, nameof(toMagnitude));
        return Math.Pow(10, -b * (toMagnitude - fromMagnitude));
    }
}
