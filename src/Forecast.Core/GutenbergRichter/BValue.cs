using Forecast.Core.Catalog;

namespace Forecast.Core.GutenbergRichter;

/// <summary>Gutenberg-Richter b-value by maximum likelihood for binned magnitudes.</summary>
/// <remarks>
/// All estimators keep the magnitudes whose bin is at or above Mc rounded to the bin grid (Mmin, the lowest bin
/// centre); see <see cref="MagnitudeSummary.Of"/>. Input order does not matter.
/// </remarks>
public static class BValue
{
    /// <summary>Generic b-value of Reasenberg &amp; Jones (1989), Science 243, 1173-1176 (from memory).</summary>
    public const double GenericB = 0.91;

    /// <summary>Fewest events for a b-value on its own (common practice: about 50).</summary>
    public const int DefaultMinEvents = 50;

    const string TintiMulargiaMethod = "Tinti-Mulargia 1987";
    const string AkiUtsuMethod = "Aki-Utsu";

    /// <summary>Exact maximum-likelihood b for binned magnitudes:
    /// <c>b = ln(1 + dM / (mean - Mmin)) / (dM ln 10)</c>.</summary>
    /// <remarks>Tinti &amp; Mulargia (1987), BSSA 77, 2125-2134 (from memory): binned Gutenberg-Richter magnitudes are
    /// geometric in the bin index with ratio <c>10^(-b dM)</c>, and this is the geometric MLE. σ after
    /// Shi &amp; Bolt (1982), BSSA 72, 1677-1687.</remarks>
    /// <exception cref="ArgumentException">A magnitude or <paramref name="mc"/> is not finite, or
    /// <paramref name="binWidth"/> is not above zero.</exception>
    public static BValueEstimate TintiMulargia(ReadOnlySpan<double> magnitudes, double mc, double binWidth) =>
        TintiMulargia(MagnitudeSummary.Of(magnitudes, mc, binWidth));

    /// <summary>Exact binned b from sufficient statistics; see the span overload.</summary>
    public static BValueEstimate TintiMulargia(MagnitudeSummary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        if (Undefined(summary, TintiMulargiaMethod) is { } undefined) return undefined;

        var dM = summary.BinWidth;
        var b = Math.Log(1 + dM / summary.MeanAboveLowestBin) / (dM * Math.Log(10));
        return new(b, ShiBoltSigma(b, summary), summary.Count, TintiMulargiaMethod, summary, Notes(summary));
    }

    /// <summary>Aki-Utsu maximum-likelihood b: <c>b = log10(e) / (mean - (Mc - dM/2))</c>.</summary>
    /// <remarks>Aki (1965), Bull. Earthq. Res. Inst. 43, 237-239, with Utsu's (1966) half-bin correction; a
    /// first-order approximation to <see cref="TintiMulargia(ReadOnlySpan{double}, double, double)"/> that reads
    /// about 0.4 % low at b = 1 with 0.1 bins. σ after Shi &amp; Bolt (1982), BSSA 72, 1677-1687.</remarks>
    /// <exception cref="ArgumentException">As for
    /// <see cref="TintiMulargia(ReadOnlySpan{double}, double, double)"/>.</exception>
    public static BValueEstimate AkiUtsu(ReadOnlySpan<double> magnitudes, double mc, double binWidth) =>
        AkiUtsu(MagnitudeSummary.Of(magnitudes, mc, binWidth));

    /// <summary>Aki-Utsu b from sufficient statistics; see the span overload.</summary>
    public static BValueEstimate AkiUtsu(MagnitudeSummary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        if (Undefined(summary, AkiUtsuMethod) is { } undefined) return undefined;

        var b = Math.Log10(Math.E) / (summary.Mean - summary.LowerEdge);
        return new(b, ShiBoltSigma(b, summary), summary.Count, AkiUtsuMethod, summary, Notes(summary));
    }

    /// <summary>Shi &amp; Bolt (1982), BSSA 72, 1677-1687:
    /// <c>sigma_b = ln(10) b^2 sqrt(sum (M_i - mean)^2 / (n (n - 1)))</c>.</summary>
    /// <remarks>The paper's factor 2.30 is ln 10 rounded (it is d b / d mean for b = log10(e) / (mean - M0));
    /// the exact ln 10 is used here. NaN when n &lt; 2 or b is not finite.</remarks>
    public static double ShiBoltSigma(double b, MagnitudeSummary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        var n = summary.Count;
        if (n < 2 || !double.IsFinite(b)) return double.NaN;
        return Math.Log(10) * b * b * Math.Sqrt(summary.SumSquaredDeviations / ((double)n * (n - 1)));
    }

    /// <summary>The b-value for forecasts: Tinti-Mulargia when at least <paramref name="minEvents"/> magnitudes are
    /// at or above Mc and the estimate is defined, otherwise <paramref name="genericB"/> (reason given).</summary>
    /// <param name="magnitudes">Magnitudes in any order.</param>
    /// <param name="mc">Completeness magnitude (rounded to the bin grid).</param>
    /// <param name="binWidth">Magnitude bin width dM.</param>
    /// <param name="minEvents">Fewest events for a data estimate; 50 is common practice.</param>
    /// <param name="genericB">Fallback b; 0.91 is the generic California value of Reasenberg &amp; Jones (1989),
    /// from memory.</param>
    /// <exception cref="ArgumentException">Bad magnitudes, Mc or bin width (as the estimators), a negative
    /// <paramref name="minEvents"/>, or a <paramref name="genericB"/> that is not finite and positive.</exception>
    public static BValueResult Estimate(
        ReadOnlySpan<double> magnitudes, double mc, double binWidth,
        int minEvents = DefaultMinEvents, double genericB = GenericB)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(minEvents);
        Guard.Positive(genericB, nameof(genericB));
        var summary = MagnitudeSummary.Of(magnitudes, mc, binWidth);
        var exact = TintiMulargia(summary);
        var aki = AkiUtsu(summary);

        var reason = FallbackReason(summary, exact, minEvents, genericB);
        var usesGeneric = reason.Length > 0;
        return new(usesGeneric ? genericB : exact.B, exact.B, aki.B, exact.Sigma, summary.Count,
            usesGeneric, reason, genericB, minEvents, summary);
    }

    /// <summary>Log-likelihood of b for magnitudes exponential above the lower bin edge:
    /// <c>n ln(beta) - beta S</c> with <c>beta = b ln 10</c>, <c>S = sum (M_i - (Mc - dM/2))</c>
    /// (<see cref="MagnitudeSummary.SumExcess"/>).</summary>
    /// <remarks>The exponential density <c>beta exp(-beta (M - M0))</c> of Aki (1965); as a function of beta it is
    /// the kernel of a Gamma distribution, so a Gamma(shape, rate) prior on beta gives a
    /// Gamma(shape + n, rate + S) posterior (textbook conjugacy). Maximised at the Aki-Utsu b.</remarks>
    /// <exception cref="ArgumentException"><paramref name="b"/> not finite and positive, <paramref name="n"/>
    /// negative, or <paramref name="sumExcess"/> negative or not finite.</exception>
    public static double LogLikelihood(double b, int n, double sumExcess)
    {
        Guard.Positive(b, nameof(b));
        ArgumentOutOfRangeException.ThrowIfNegative(n);
        Guard.NonNegative(sumExcess, nameof(sumExcess));
        var beta = b * Math.Log(10);
        return n * Math.Log(beta) - beta * sumExcess;
    }

    static BValueEstimate? Undefined(MagnitudeSummary summary, string method)
    {
        if (summary.Count == 0)
            return new(double.NaN, double.NaN, 0, method, summary, "No magnitudes at or above Mc.");
        if (AllInLowestBin(summary))
        {
            return new(double.PositiveInfinity, double.NaN, summary.Count, method, summary,
                "Every magnitude is in the lowest bin (mean = Mmin): the likelihood grows without bound in b, " +
                "so b is undefined (infinite).");
        }
        return null;
    }

    // Mean - Mmin below a thousandth of a bin is floating noise around zero.
    static bool AllInLowestBin(MagnitudeSummary s) =>
        s.MeanAboveLowestBin <= MagnitudeBinning.BinTolerance * s.BinWidth;

    static string Notes(MagnitudeSummary s) =>
        s.Count < 2 ? "Only one magnitude: b is defined but its standard error is not." : "";

    static string FallbackReason(MagnitudeSummary s, BValueEstimate exact, int minEvents, double genericB)
    {
        var generic = $"the generic b = {genericB:0.###} is used";
        if (!exact.IsDefined) return $"{exact.Note} {char.ToUpperInvariant(generic[0])}{generic[1..]}.";
        if (s.Count < minEvents)
        {
            return $"Only {s.Count} events at or above Mc = {s.LowestBinCentre:0.0#}, " +
                $"fewer than {minEvents}; {generic}.";
        }
        return "";
    }
}
