using Forecast.Core.Omori;

namespace Forecast.Core.ReasenbergJones;

/// <summary>Forecasts from the Reasenberg-Jones model with fixed parameters.</summary>
/// <remarks>Reasenberg &amp; Jones (1989), Science 243, 1173-1176 (pages from memory).</remarks>
public static class ReasenbergJones
{
    /// <summary>
    /// Expected number of aftershocks with magnitude at least <paramref name="minMagnitude"/> in [t1, t2] days:
    /// <c>N = 10^(a + b (Mm - M)) * integral_{t1}^{t2} (t + c)^(-p) dt</c> (Reasenberg &amp; Jones 1989).
    /// </summary>
    public static double ExpectedNumber(
        RjParameters parameters, double mainshockMagnitude, double minMagnitude, double t1Days, double t2Days)
    {
        ArgumentNullException.ThrowIfNull(parameters);
        parameters.Check();
        CheckMagnitudes(mainshockMagnitude, minMagnitude);
        OmoriUtsu.CheckWindow(t1Days, t2Days);
        return Productivity(parameters, mainshockMagnitude, minMagnitude)
            * OmoriUtsu.IntegralUnchecked(parameters.C, parameters.P, t1Days, t2Days);
    }

    /// <summary>
    /// Probability of at least one such aftershock: the count is Poisson, so <c>1 - exp(-N)</c>
    /// (Reasenberg &amp; Jones 1989), computed as <c>-expm1(-N)</c> so that tiny N keeps its digits.
    /// </summary>
    public static double ProbabilityOfAtLeastOne(
        RjParameters parameters, double mainshockMagnitude, double minMagnitude, double t1Days, double t2Days)
    {
        double n = ExpectedNumber(parameters, mainshockMagnitude, minMagnitude, t1Days, t2Days);
        return -Precise.Expm1(-n);
    }

    /// <summary>Productivity <c>10^(a + b (Mm - M))</c>: the Omori K for events of magnitude at least M.</summary>
    public static double Productivity(RjParameters parameters, double mainshockMagnitude, double minMagnitude)
    {
        ArgumentNullException.ThrowIfNull(parameters);
        return Math.Pow(10, parameters.A + parameters.B * (mainshockMagnitude - minMagnitude));
    }

    /// <summary>
    /// The a-value matching an Omori K for events <c>M &gt;= Mc</c>: from <c>K = 10^(a + b (Mm - Mc))</c>,
    /// <c>a = log10 K - b (Mm - Mc)</c> (Reasenberg &amp; Jones 1989).
    /// </summary>
    public static double AFromK(double k, double b, double mainshockMagnitude, double mc)
    {
        if (!(k > 0) || double.IsInfinity(k)) throw new ArgumentException($"K must be positive and finite, got {k}.", nameof(k));
        if (!(b > 0) || double.IsInfinity(b)) throw new ArgumentException($"b must be positive and finite, got {b}.", nameof(b));
        CheckMagnitudes(mainshockMagnitude, mc);
        return Math.Log10(k) - b * (mainshockMagnitude - mc);
    }

    /// <summary>The Omori K for events <c>M &gt;= Mc</c>: <c>K = 10^(a + b (Mm - Mc))</c> (Reasenberg &amp; Jones 1989).</summary>
    public static double KFromA(double a, double b, double mainshockMagnitude, double mc)
    {
        CheckMagnitudes(mainshockMagnitude, mc);
        return Math.Pow(10, a + b * (mainshockMagnitude - mc));
    }

    static void CheckMagnitudes(double mainshockMagnitude, double magnitude)
    {
        if (!double.IsFinite(mainshockMagnitude))
            throw new ArgumentException($"The mainshock magnitude must be finite, got {mainshockMagnitude}.", nameof(mainshockMagnitude));
        if (!double.IsFinite(magnitude))
            throw new ArgumentException($"The magnitude threshold must be finite, got {magnitude}.", nameof(magnitude));
    }
}
