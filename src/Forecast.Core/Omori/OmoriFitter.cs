namespace Forecast.Core.Omori;

/// <summary>
/// Maximum-likelihood fit of the Omori-Utsu law (Ogata 1983, J. Phys. Earth 31, 115-124, from memory).
/// </summary>
/// <remarks>
/// K profiles out (<c>K_hat = N / A(c, p)</c>), leaving <c>l(c, p) = N ln(N / A) - N - p sum ln(t_i + c)</c>.
/// For a fixed c the sum is one O(N) pass and the best p is a one-dimensional concave problem in O(1) per
/// step (ln A is convex in p, being the log of a Laplace transform). So the fit is a coarse scan of ln c over its
/// whole range followed by Brent's method on the profile in ln c, each step maximising over p by Brent:
/// it cannot be trapped by a poor start, and costs about 30 passes over the data.
/// Uncertainty: the inverse of the observed information, <c>-Hessian of log L</c> in (ln K, ln c, p), analytic
/// except for the p-derivatives of A, taken by central differences.
/// </remarks>
internal static class OmoriFitter
{
    const int ScanNodes = 19;   // about 0.77 apart in ln c over the default range
    const double BoundTolerance = 1e-5;

    public static OmoriFit Fit(ReadOnlySpan<double> tDays, double sDays, double tEndDays, OmoriFitOptions options)
    {
        OmoriUtsu.CheckWindow(sDays, tEndDays);
        CheckOptions(options);
        double[] times = InWindow(tDays, sDays, tEndDays);
        int n = times.Length;
        if (n < options.MinEvents)
        {
            return new OmoriFit(OmoriFitStatus.TooFewEvents,
                $"{n} event(s) in [{sDays}, {tEndDays}] d; the Omori-Utsu fit needs at least {options.MinEvents}.",
                n, sDays, tEndDays, double.NaN, double.NaN, double.NaN, double.NaN, null);
        }

        double lnCMin = Math.Log(options.MinC), lnCMax = Math.Log(options.MaxC);
        double lnC = ScalarMaximizer.MaximizeWithScan(
            x => ProfileOverP(times, sDays, tEndDays, Math.Exp(x), options).LogLikelihood,
            lnCMin, lnCMax, ScanNodes, 1e-8);
        double c = Math.Exp(lnC);
        var best = ProfileOverP(times, sDays, tEndDays, c, options);
        double p = best.P;
        double k = n / OmoriUtsu.IntegralUnchecked(c, p, sDays, tEndDays);
        double logL = OmoriUtsu.LogLikelihood(times, sDays, tEndDays, k, c, p);

        double[,] information = ObservedInformation(times, sDays, tEndDays, k, c, p);
        double[,]? covariance = SymmetricMatrix.TryInvertPositiveDefinite(information, out var inverse)
            ? ToLog10(inverse) : null;
        double[] score = Score(times, sDays, tEndDays, k, c, p);

        var (status, message) = Classify(lnC - lnCMin < BoundTolerance || lnCMax - lnC < BoundTolerance,
            p - options.MinP < 1e-6 || options.MaxP - p < 1e-6, covariance, score, information, options, c, p, n);
        return new OmoriFit(status, message, n, sDays, tEndDays, k, c, p, logL, covariance);
    }

    internal readonly record struct ProfilePoint(double P, double LogLikelihood);

    /// <summary>Best p for a fixed c and the profile log-likelihood there (K at its profile value N / A).</summary>
    internal static ProfilePoint ProfileOverP(double[] times, double sDays, double tEndDays, double c, OmoriFitOptions o)
    {
        double sumLog = SumLog(times, c);
        int n = times.Length;
        double Objective(double p) => -n * Math.Log(OmoriUtsu.IntegralUnchecked(c, p, sDays, tEndDays)) - p * sumLog;
        double pBest = ScalarMaximizer.Maximize(Objective, o.MinP, o.MaxP, 1e-12);
        return new ProfilePoint(pBest, n * Math.Log(n) - n + Objective(pBest));
    }

    internal static double SumLog(double[] times, double c)
    {
        double sum = 0;
        for (int i = 0; i < times.Length; i++) sum += Math.Log(times[i] + c);
        return sum;
    }

    internal static double[] InWindow(ReadOnlySpan<double> tDays, double sDays, double tEndDays)
    {
        int count = 0;
        foreach (double t in tDays)
            if (t >= sDays && t <= tEndDays) count++;
        var times = new double[count];
        int i = 0;
        foreach (double t in tDays)
            if (t >= sDays && t <= tEndDays) times[i++] = t;
        return times;
    }

    /// <summary>Gradient of log L in (ln K, ln c, p).</summary>
    internal static double[] Score(double[] times, double sDays, double tEndDays, double k, double c, double p)
    {
        var d = Derivatives(times, sDays, tEndDays, c, p);
        return
        [
            times.Length - k * d.A,
            -p * c * d.S1 - k * d.A_theta,
            -d.SumLog - k * d.A_p,
        ];
    }

    /// <summary>Observed information (minus the Hessian of log L) in (ln K, ln c, p).</summary>
    internal static double[,] ObservedInformation(double[] times, double sDays, double tEndDays, double k, double c, double p)
    {
        var d = Derivatives(times, sDays, tEndDays, c, p);
        double g1 = c * d.S1, g2 = c * d.S1 - c * c * d.S2;   // first and second theta-derivatives of sum ln(t + c)
        var h = new double[3, 3];
        h[0, 0] = k * d.A;
        h[0, 1] = h[1, 0] = k * d.A_theta;
        h[0, 2] = h[2, 0] = k * d.A_p;
        h[1, 1] = p * g2 + k * d.A_thetaTheta;
        h[1, 2] = h[2, 1] = g1 + k * d.A_thetaP;
        h[2, 2] = k * d.A_pp;
        return h;
    }

    readonly record struct AllDerivatives(
        double SumLog, double S1, double S2, double A, double A_theta, double A_thetaTheta, double A_thetaP,
        double A_p, double A_pp);

    /// <summary>Data sums and derivatives of A in theta = ln c and p.</summary>
    static AllDerivatives Derivatives(double[] times, double sDays, double tEndDays, double c, double p)
    {
        double sumLog = 0, s1 = 0, s2 = 0;
        foreach (double t in times)
        {
            double inv = 1 / (t + c);
            sumLog += Math.Log(t + c);
            s1 += inv;
            s2 += inv * inv;
        }
        double sc = sDays + c, tc = tEndDays + c;
        // dA/dc = (T + c)^-p - (S + c)^-p, so with theta = ln c: A_theta = c dA/dc.
        double aTheta = c * (Math.Pow(tc, -p) - Math.Pow(sc, -p));
        double aThetaTheta = aTheta - p * c * c * (Math.Pow(tc, -p - 1) - Math.Pow(sc, -p - 1));
        double aThetaP = c * (-Math.Log(tc) * Math.Pow(tc, -p) + Math.Log(sc) * Math.Pow(sc, -p));
        const double h = 1e-4;
        double a0 = OmoriUtsu.IntegralUnchecked(c, p, sDays, tEndDays);
        double aPlus = OmoriUtsu.IntegralUnchecked(c, p + h, sDays, tEndDays);
        double aMinus = OmoriUtsu.IntegralUnchecked(c, p - h, sDays, tEndDays);
        return new AllDerivatives(sumLog, s1, s2, a0, aTheta, aThetaTheta, aThetaP,
            (aPlus - aMinus) / (2 * h), (aPlus - 2 * a0 + aMinus) / (h * h));
    }

    static double[,] ToLog10(double[,] covarianceLn)
    {
        // (ln K, ln c, p) -> (log10 K, log10 c, p): divide by ln 10 once per logarithmic index.
        double[] scale = [1 / Math.Log(10), 1 / Math.Log(10), 1];
        var result = new double[3, 3];
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                result[i, j] = covarianceLn[i, j] * scale[i] * scale[j];
        return result;
    }

    static (OmoriFitStatus, string) Classify(bool cAtBound, bool pAtBound, double[,]? covariance, double[] score,
        double[,] information, OmoriFitOptions o, double c, double p, int n)
    {
        if (cAtBound)
            return (OmoriFitStatus.CAtBound,
                $"c = {c:G4} d lies on a bound of [{o.MinC}, {o.MaxC}] d: the {n} times do not resolve c " +
                "(often a sign of missing early events); p and K are conditional on that c.");
        if (pAtBound)
            return (OmoriFitStatus.PAtBound, $"p = {p:G4} lies on a bound of [{o.MinP}, {o.MaxP}]: the estimate is not an interior optimum.");
        if (covariance is null)
            return (OmoriFitStatus.DidNotConverge, "The observed information is not positive definite at the optimum; no standard errors.");
        for (int i = 0; i < 3; i++)
        {
            // The score in units of its own standard deviation: far below 1 at a true optimum.
            if (!(Math.Abs(score[i]) <= 1e-3 * Math.Sqrt(information[i, i])))
                return (OmoriFitStatus.DidNotConverge, $"The score is not zero at the optimum (component {i}: {score[i]:G3}).");
        }
        return (OmoriFitStatus.Converged, $"Maximum-likelihood fit of {n} events: c = {c:G4} d, p = {p:G4}.");
    }

    static void CheckOptions(OmoriFitOptions o)
    {
        if (!(o.MinC > 0) || !(o.MaxC > o.MinC) || double.IsInfinity(o.MaxC))
            throw new ArgumentException($"The c range must satisfy 0 < MinC < MaxC < infinity, got [{o.MinC}, {o.MaxC}].", nameof(o));
        if (!(o.MaxP > o.MinP) || !(o.MinP > 0) || double.IsInfinity(o.MaxP))
            throw new ArgumentException($"The p range must satisfy 0 < MinP < MaxP < infinity, got [{o.MinP}, {o.MaxP}].", nameof(o));
        if (o.MinEvents < 2) throw new ArgumentException($"MinEvents must be at least 2, got {o.MinEvents}.", nameof(o));
    }
}
