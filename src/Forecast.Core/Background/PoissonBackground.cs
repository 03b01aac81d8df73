using Forecast.Core.Catalog;
using Forecast.Core.GutenbergRichter;
using MathNet.Numerics.Distributions;

namespace Forecast.Core.Background;

/// <summary>Background rate of independent events, counted in consecutive windows, with a check that the counts
/// look Poisson.</summary>
/// <param name="RatePerDay">Mean-count estimator (the Poisson maximum-likelihood rate):
/// events / (n0 windowDays).</param>
/// <param name="RateSigmaPerDay">Its Poisson standard error, sqrt(events) / (n0 windowDays).</param>
/// <param name="EmptyWindowRatePerDay">Empty-window estimator <c>-ln(n(0) / n0) / windowDays</c>; NaN when no
/// window is empty (see <paramref name="Note"/>).</param>
/// <param name="EventCount">Independent events at or above <paramref name="MinMagnitude"/> in the counted
/// windows.</param>
/// <param name="WindowCount">n0, the number of whole windows in the period.</param>
/// <param name="EmptyWindowCount">n(0), windows with no event.</param>
/// <param name="WindowCounts">Event count of each window, in time order.</param>
/// <param name="DispersionIndex">Sample variance / mean of the window counts; about 1 for a Poisson process,
/// above 1 when events cluster. NaN when fewer than two windows or no events.</param>
/// <param name="ChiSquare">Dispersion statistic <c>sum (n_i - mean)^2 / mean = (n0 - 1) D</c>.</param>
/// <param name="DegreesOfFreedom">n0 - 1.</param>
/// <param name="DispersionPValue">Upper-tail probability of <paramref name="ChiSquare"/> under chi-square with
/// n0 - 1 degrees of freedom: small values say the counts are over-dispersed (clustered), not Poisson.</param>
/// <param name="MinMagnitude">Magnitude threshold (at or above).</param>
/// <param name="FromUtc">Start of the first window.</param>
/// <param name="ToUtc">End of the period asked for.</param>
/// <param name="WindowDays">Window length in days.</param>
/// <param name="Declustered">Whether the catalog was declustered (Gardner &amp; Knopoff 1974) before counting.</param>
/// <param name="Note">Plain words on anything left out or undefined; empty otherwise.</param>
public sealed record PoissonBackgroundEstimate(
    double RatePerDay, double RateSigmaPerDay, double EmptyWindowRatePerDay,
    int EventCount, int WindowCount, int EmptyWindowCount, IReadOnlyList<int> WindowCounts,
    double DispersionIndex, double ChiSquare, int DegreesOfFreedom, double DispersionPValue,
    double MinMagnitude, DateTime FromUtc, DateTime ToUtc, double WindowDays, bool Declustered, string Note);

/// <summary>Background (independent-event) seismicity as a Poisson process, and probabilities from it.</summary>
/// <remarks>Independent events follow a Poisson process; with n0 windows of which n(0) are empty the rate per
/// window is <c>-ln(n(0) / n0)</c>, and Poisson-ness is checked by the index of dispersion of window counts
/// (Gardner &amp; Knopoff 1974, BSSA 64, 1363-1367; the dispersion test is textbook statistics).</remarks>
public static class PoissonBackground
{
    /// <summary>Counts independent events at or above <paramref name="minMagnitude"/> in consecutive windows of
    /// <paramref name="windowDays"/> from <paramref name="fromUtc"/>.</summary>
    /// <param name="catalog">The catalog in any order; declustering sees every event given, the count only those
    /// at or above <paramref name="minMagnitude"/> inside the windows.</param>
    /// <param name="minMagnitude">Count events with magnitude at or above this.</param>
    /// <param name="fromUtc">Start of the first window.</param>
    /// <param name="toUtc">End of the period; only whole windows are counted, a remainder is left out.</param>
    /// <param name="windowDays">Window length in days.</param>
    /// <param name="decluster">Decluster with <see cref="GardnerKnopoff.Decluster"/> (default) or treat every
    /// event as independent (for a catalog already declustered).</param>
    /// <exception cref="ArgumentException">A bad catalog (see <see cref="GardnerKnopoff.Decluster"/>), a non-finite
    /// magnitude threshold, a window not above zero, or a period shorter than one window.</exception>
    public static PoissonBackgroundEstimate Estimate(
        IReadOnlyList<CatalogEvent> catalog, double minMagnitude, DateTime fromUtc, DateTime toUtc,
        double windowDays, bool decluster = true)
    {
        ArgumentNullException.ThrowIfNull(catalog);
        Guard.Finite(minMagnitude, nameof(minMagnitude));
        Guard.Positive(windowDays, nameof(windowDays));
        var windowCount = (int)Math.Floor((toUtc - fromUtc).TotalDays / windowDays);
        if (windowCount < 1)
            throw new ArgumentException(
                $"The period {fromUtc:O} to {toUtc:O} is shorter than one window of {windowDays} days.",
                nameof(toUtc));

        var events = decluster ? GardnerKnopoff.Decluster(catalog).Independent : catalog;
        var counts = CountPerWindow(events, minMagnitude, fromUtc, windowDays, windowCount);
        return Summarise(counts, minMagnitude, fromUtc, toUtc, windowDays, decluster);
    }

    /// <summary>Chance of at least one event in <paramref name="durationDays"/>: <c>1 - exp(-rate dt)</c>.</summary>
    /// <exception cref="ArgumentException">A negative or non-finite rate or duration.</exception>
    public static double Probability(double ratePerDay, double durationDays)
    {
        Guard.NonNegative(ratePerDay, nameof(ratePerDay));
        Guard.NonNegative(durationDays, nameof(durationDays));
        return -ExpMinusOne(-ratePerDay * durationDays);
    }

    // exp(x) - 1 to a few ulps for any x (Kahan's trick, in Higham 2002, Accuracy and Stability of Numerical
    // Algorithms, 2nd ed., section 1.14.1, from memory): 1 - exp(-x) would lose every digit for tiny x, and
    // MathNet 5.0's SpecialFunctions.Expm1 was seen here to be off by 2e-7 relative at x = -0.07.
    static double ExpMinusOne(double x)
    {
        var u = Math.Exp(x);
        if (u == 1.0) return x;
        var um1 = u - 1.0;
        return um1 == -1.0 ? -1.0 : um1 * x / Math.Log(u);
    }

    /// <summary>Probability gain: forecast probability / background probability, same window and magnitude.</summary>
    /// <returns>The ratio; +infinity when the background is 0 and the forecast is not; NaN when both are 0
    /// (no information either way).</returns>
    /// <exception cref="ArgumentException">A value outside 0..1.</exception>
    public static double ProbabilityGain(double forecastProbability, double backgroundProbability)
    {
        Guard.Probability(forecastProbability, nameof(forecastProbability));
        Guard.Probability(backgroundProbability, nameof(backgroundProbability));
        if (backgroundProbability == 0)
            return forecastProbability == 0 ? double.NaN : double.PositiveInfinity;
        return forecastProbability / backgroundProbability;
    }

    /// <summary>The rate at or above <paramref name="toMagnitude"/> from a rate at or above
    /// <paramref name="fromMagnitude"/>: <c>rate(M) = rate(Mref) 10^(-b (M - Mref))</c> (Gutenberg-Richter).</summary>
    /// <exception cref="ArgumentException">A negative rate, or a b / magnitude that is not finite.</exception>
    public static double ScaleRate(double ratePerDay, double b, double fromMagnitude, double toMagnitude)
    {
        Guard.NonNegative(ratePerDay, nameof(ratePerDay));
        return ratePerDay * GutenbergRichterLaw.ScaleFactor(b, fromMagnitude, toMagnitude);
    }

    static int[] CountPerWindow(
        IReadOnlyList<CatalogEvent> events, double minMagnitude, DateTime fromUtc, double windowDays, int windowCount)
    {
        var counts = new int[windowCount];
        foreach (var e in events)
        {
            if (!(e.Magnitude >= minMagnitude - MagnitudeTolerance)) continue;
            var offsetDays = (e.TimeUtc - fromUtc).TotalDays;
            if (offsetDays < 0) continue;
            var window = (long)Math.Floor(offsetDays / windowDays);
            if (window < windowCount) counts[window]++;
        }
        return counts;
    }

    // A catalog magnitude 4.999999 stored for 5.0 is still "at or above 5".
    const double MagnitudeTolerance = 1e-6;

    static PoissonBackgroundEstimate Summarise(
        int[] counts, double minMagnitude, DateTime fromUtc, DateTime toUtc, double windowDays, bool declustered)
    {
        var n0 = counts.Length;
        var total = counts.Sum();
        var empty = counts.Count(c => c == 0);
        var spanDays = n0 * windowDays;
        var mean = (double)total / n0;

        var emptyRate = empty == 0 ? double.NaN : -Math.Log((double)empty / n0) / windowDays;
        var (dispersion, chiSquare, pValue) = DispersionTest(counts, mean);
        var note = Notes(empty, n0, total, (toUtc - fromUtc).TotalDays - spanDays);
        return new(total / spanDays, Math.Sqrt(total) / spanDays, emptyRate, total, n0, empty, counts,
            dispersion, chiSquare, n0 - 1, pValue, minMagnitude, fromUtc, toUtc, windowDays, declustered, note);
    }

    static (double Index, double ChiSquare, double PValue) DispersionTest(int[] counts, double mean)
    {
        if (counts.Length < 2 || mean == 0) return (double.NaN, double.NaN, double.NaN);
        var squares = counts.Sum(c => (c - mean) * (c - mean));
        var index = squares / (counts.Length - 1) / mean;
        var chiSquare = squares / mean;
        var pValue = 1 - ChiSquared.CDF(counts.Length - 1, chiSquare);
        return (index, chiSquare, pValue);
    }

    static string Notes(int empty, int n0, int total, double leftOverDays)
    {
        var notes = new List<string>();
        if (empty == 0)
            notes.Add("No window is empty, so the empty-window estimator is undefined; use the mean-count rate.");
        if (n0 < 2) notes.Add("Only one window: the dispersion test needs at least two.");
        else if (total == 0) notes.Add("No events: the dispersion test is undefined.");
        if (leftOverDays > 1e-9) notes.Add($"The last {leftOverDays:0.###} days, less than a window, are not counted.");
        return string.Join(" ", notes);
    }
}
