namespace Forecast.Core.Omori;

/// <summary>The modified Omori law (Omori-Utsu): aftershock rate <c>lambda(t) = K (t + c)^(-p)</c> per day.</summary>
/// <remarks>Utsu (1961), Geophys. Mag. 30, 521-605; maximum likelihood after Ogata (1983), J. Phys. Earth 31,
/// 115-124 (pages from memory). Times are days since the mainshock.</remarks>
public static class OmoriUtsu
{
    /// <summary>
    /// <c>A(c, p) = integral from S to T of (t + c)^(-p) dt</c>, the expected number per unit K in [S, T].
    /// </summary>
    /// <remarks>
    /// Closed form (Ogata 1983): <c>((T + c)^(1-p) - (S + c)^(1-p)) / (1 - p)</c>, and <c>ln((T + c)/(S + c))</c>
    /// at p = 1. Evaluated as <c>(S + c)^(1-p) expm1((1-p) L) / (1-p)</c> with <c>L = log1p((T - S)/(S + c))</c>,
    /// which has no cancellation near p = 1; when <c>(1-p) L</c> is large the raw difference is well conditioned
    /// and avoids overflow of <c>expm1</c>.
    /// </remarks>
    public static double Integral(double c, double p, double sDays, double tDays)
    {
        CheckOmori(c, p);
        CheckWindow(sDays, tDays);
        return IntegralUnchecked(c, p, sDays, tDays);
    }

    internal static double IntegralUnchecked(double c, double p, double sDays, double tDays)
    {
        if (tDays <= sDays) return 0;
        double sc = sDays + c;
        double logRatio = Precise.Log1P((tDays - sDays) / sc);
        double x = 1 - p;
        if (x == 0) return logRatio;
        double u = x * logRatio;
        if (u > 50)
        {
            return (Math.Exp(x * Math.Log(tDays + c)) - Math.Exp(x * Math.Log(sc))) / x;
        }
        return Math.Exp(x * Math.Log(sc)) * Precise.Expm1(u) / x;
    }

    /// <summary>
    /// Log-likelihood of the event times in [S, T] under the Omori-Utsu rate (Ogata 1983):
    /// <c>log L = N log K - p sum log(t_i + c) - K A(c, p)</c>. Times outside [S, T] are ignored.
    /// </summary>
    public static double LogLikelihood(ReadOnlySpan<double> tDays, double sDays, double tEndDays, double k, double c, double p)
    {
        if (!(k > 0) || double.IsInfinity(k)) throw new ArgumentException($"K must be positive and finite, got {k}.", nameof(k));
        CheckOmori(c, p);
        CheckWindow(sDays, tEndDays);
        int n = 0;
        double sumLog = 0;
        foreach (double t in tDays)
        {
            if (t < sDays || t > tEndDays) continue;
            n++;
            sumLog += Math.Log(t + c);
        }
        return n * Math.Log(k) - p * sumLog - k * IntegralUnchecked(c, p, sDays, tEndDays);
    }

    /// <summary>
    /// Maximum-likelihood K, c and p from event times (days since the mainshock); only times with
    /// S &lt;= t &lt;= T count, and the input may be unsorted.
    /// </summary>
    /// <remarks>See <see cref="OmoriFitter"/> for the method.</remarks>
    public static OmoriFit Fit(ReadOnlySpan<double> tDays, double sDays, double tEndDays, OmoriFitOptions? options = null) =>
        OmoriFitter.Fit(tDays, sDays, tEndDays, options ?? new OmoriFitOptions());

    internal static void CheckOmori(double c, double p)
    {
        if (!(c > 0) || double.IsInfinity(c)) throw new ArgumentException($"c must be positive and finite (days), got {c}.", nameof(c));
        if (!double.IsFinite(p)) throw new ArgumentException($"p must be finite, got {p}.", nameof(p));
    }

    internal static void CheckWindow(double sDays, double tDays)
    {
        if (!(sDays >= 0) || double.IsInfinity(sDays))
            throw new ArgumentException($"The window start must be finite and >= 0 days, got {sDays}.", nameof(sDays));
        if (!(tDays >= sDays) || double.IsInfinity(tDays))
            throw new ArgumentException($"The window end ({tDays} d) must be finite and not before its start ({sDays} d).", nameof(tDays));
    }
}
