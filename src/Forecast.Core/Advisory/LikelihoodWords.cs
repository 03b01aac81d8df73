namespace Forecast.Core.Advisory;

/// <summary>Calibrated likelihood language of the IPCC Fifth Assessment Report.</summary>
/// <remarks>
/// Mastrandrea et al. (2010), "Guidance Note for Lead Authors of the IPCC Fifth Assessment Report on Consistent
/// Treatment of Uncertainties", IPCC, table 1 (from memory): virtually certain 99-100 %, very likely 90-100 %,
/// likely 66-100 %, about as likely as not 33-66 %, unlikely 0-33 %, very unlikely 0-10 %, exceptionally unlikely
/// 0-1 %. The ranges nest, so the most specific term that contains the probability is used; at a shared edge the
/// term nearer the end of the scale wins (33 % is "unlikely", 66 % "likely", 10 % "very unlikely"). The guidance
/// asks that the number be given beside the word, which <see cref="Describe"/> does.
/// </remarks>
public static class LikelihoodWords
{
    /// <summary>The IPCC AR5 term for a probability in 0..1.</summary>
    /// <exception cref="ArgumentException">The probability is outside 0..1 or not a number.</exception>
    public static string For(double probability)
    {
        if (!(probability is >= 0 and <= 1))
            throw new ArgumentException($"A probability must be in 0..1, got {probability}.", nameof(probability));
        return probability switch
        {
            >= 0.99 => "virtually certain",
            >= 0.90 => "very likely",
            >= 0.66 => "likely",
            > 0.33 => "about as likely as not",
            <= 0.01 => "exceptionally unlikely",
            <= 0.10 => "very unlikely",
            _ => "unlikely",
        };
    }

    /// <summary>The term with the number beside it, e.g. "unlikely (12 %)".</summary>
    public static string Describe(double probability) => $"{For(probability)} ({Percent(probability)})";

    /// <summary>A probability as a percentage for people: whole per cent from 1 to 99, one decimal below 1 %,
    /// and "less than 0.1 %" / "more than 99 %" at the ends (0 and 1 print as such).</summary>
    /// <exception cref="ArgumentException">The probability is outside 0..1 or not a number.</exception>
    public static string Percent(double probability)
    {
        if (!(probability is >= 0 and <= 1))
            throw new ArgumentException($"A probability must be in 0..1, got {probability}.", nameof(probability));
        var pct = probability * 100;
        var ic = System.Globalization.CultureInfo.InvariantCulture;
        return pct switch
        {
            0 => "0 %",
            < 0.1 => "less than 0.1 %",
            < 0.95 => pct.ToString("0.0", ic) + " %",
            100 => "100 %",
            > 99 => "more than 99 %",
            _ => Math.Round(pct, MidpointRounding.AwayFromZero).ToString("0", ic) + " %",
        };
    }
}
