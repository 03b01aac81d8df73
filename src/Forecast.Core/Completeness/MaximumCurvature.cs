using Forecast.Core.Catalog;

namespace Forecast.Core.Completeness;

/// <summary>Completeness magnitude by maximum curvature (MAXC): the most populated bin of the non-cumulative
/// frequency-magnitude distribution, plus a correction.</summary>
/// <remarks>Woessner &amp; Wiemer (2005), BSSA 95, 684-698: MAXC underestimates Mc, and +0.2 is their usual
/// correction. Ties go to the highest such bin (project choice: the more cautious Mc).</remarks>
public static class MaximumCurvature
{
    /// <summary>Correction added to the mode bin (Woessner &amp; Wiemer 2005).</summary>
    public const double DefaultCorrection = 0.2;

    /// <summary>Default number of bootstrap resamples (Woessner &amp; Wiemer 2005 use a few hundred; common
    /// practice).</summary>
    public const int DefaultBootstrapSamples = 200;

    /// <summary>Bin centre of the most populated bin (no correction); NaN for no magnitudes.</summary>
    /// <exception cref="ArgumentException">A magnitude is not finite or the bin width is not above zero.</exception>
    public static double ModeBinCentre(ReadOnlySpan<double> magnitudes, double binWidth)
    {
        Guard.AllFinite(magnitudes, nameof(magnitudes));
        Guard.Positive(binWidth, nameof(binWidth));
        return magnitudes.IsEmpty ? double.NaN : ModeOfChecked(magnitudes, binWidth);
    }

    /// <summary>Mc = MAXC + <paramref name="correction"/>, with a bootstrap standard deviation.</summary>
    /// <param name="magnitudes">Magnitudes in any order.</param>
    /// <param name="binWidth">Magnitude bin width (see <see cref="MagnitudeBinning.InferBinWidth"/>).</param>
    /// <param name="bootstrapSamples">Resamples for sigma; 0 or 1 gives sigma NaN.</param>
    /// <param name="seed">Seed of the resampling; equal seeds give equal results.</param>
    /// <param name="correction">Added to the mode bin; 0.2 after Woessner &amp; Wiemer (2005).</param>
    /// <exception cref="ArgumentException">A magnitude or the correction is not finite, the bin width is not above
    /// zero, or <paramref name="bootstrapSamples"/> is negative.</exception>
    public static CompletenessEstimate Estimate(
        ReadOnlySpan<double> magnitudes, double binWidth,
        int bootstrapSamples = DefaultBootstrapSamples, int seed = 0, double correction = DefaultCorrection)
    {
        Guard.AllFinite(magnitudes, nameof(magnitudes));
        Guard.Positive(binWidth, nameof(binWidth));
        Guard.Finite(correction, nameof(correction));
        Bootstrap.CheckArguments(bootstrapSamples);

        if (magnitudes.IsEmpty)
        {
            return new(double.NaN, double.NaN, CompletenessMethod.MaximumCurvature, 0, 0, binWidth,
                bootstrapSamples, seed, double.NaN, "No magnitudes: Mc is undefined.");
        }
        var mc = McOfChecked(magnitudes, binWidth, correction);
        var sigma = Bootstrap.StandardDeviation(magnitudes, bootstrapSamples, seed,
            sample => McOfChecked(sample, binWidth, correction));
        return new(mc, sigma, CompletenessMethod.MaximumCurvature, magnitudes.Length,
            CountAtOrAbove(magnitudes, mc, binWidth), binWidth, bootstrapSamples, seed, double.NaN, "");
    }

    internal static double McOfChecked(ReadOnlySpan<double> magnitudes, double binWidth, double correction) =>
        MagnitudeBinning.RoundToBin(ModeOfChecked(magnitudes, binWidth) + correction, binWidth);

    internal static double ModeOfChecked(ReadOnlySpan<double> magnitudes, double binWidth)
    {
        var (lowIndex, counts) = FrequencyMagnitudeDistribution.Histogram(magnitudes, binWidth);
        var best = 0;
        for (var k = 1; k < counts.Length; k++)
        {
            if (counts[k] >= counts[best]) best = k;
        }
        return MagnitudeBinning.BinCentre(lowIndex + best, binWidth);
    }

    internal static int CountAtOrAbove(ReadOnlySpan<double> magnitudes, double mc, double binWidth)
    {
        if (!double.IsFinite(mc)) return 0;
        var lowIndex = MagnitudeBinning.BinIndex(mc, binWidth);
        var n = 0;
        foreach (var m in magnitudes)
        {
            if (MagnitudeBinning.BinIndex(m, binWidth) >= lowIndex) n++;
        }
        return n;
    }
}
