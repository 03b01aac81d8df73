namespace Forecast.Core.Omori;

/// <summary>One-dimensional maximisation on a closed interval by Brent's method.</summary>
/// <remarks>Brent (1973), Algorithms for Minimization without Derivatives, ch. 5: golden-section steps
/// safeguarding parabolic interpolation; written out here so every evaluation happens in one fixed order.</remarks>
internal static class ScalarMaximizer
{
    const double GoldenRatioComplement = 0.3819660112501051;

    /// <summary>Returns the argument of the maximum of <paramref name="f"/> on [lower, upper].</summary>
    public static double Maximize(Func<double, double> f, double lower, double upper, double tolerance, int maxIterations = 200)
    {
        double a = lower, b = upper;
        double x = a + GoldenRatioComplement * (b - a), w = x, v = x;
        double fx = -f(x), fw = fx, fv = fx;
        double d = 0, e = 0;
        for (int iteration = 0; iteration < maxIterations; iteration++)
        {
            double middle = 0.5 * (a + b);
            double tol1 = tolerance * Math.Abs(x) + 1e-12, tol2 = 2 * tol1;
            if (Math.Abs(x - middle) <= tol2 - 0.5 * (b - a)) break;
            bool golden = true;
            if (Math.Abs(e) > tol1)
            {
                double r = (x - w) * (fx - fv), q = (x - v) * (fx - fw), pNum = (x - v) * q - (x - w) * r;
                q = 2 * (q - r);
                if (q > 0) pNum = -pNum; else q = -q;
                if (Math.Abs(pNum) < Math.Abs(0.5 * q * e) && pNum > q * (a - x) && pNum < q * (b - x))
                {
                    e = d;
                    d = pNum / q;
                    double u0 = x + d;
                    if (u0 - a < tol2 || b - u0 < tol2) d = x < middle ? tol1 : -tol1;
                    golden = false;
                }
            }
            if (golden)
            {
                e = (x >= middle ? a : b) - x;
                d = GoldenRatioComplement * e;
            }
            double u = Math.Abs(d) >= tol1 ? x + d : x + (d > 0 ? tol1 : -tol1);
            double fu = -f(u);
            if (fu <= fx)
            {
                if (u >= x) a = x; else b = x;
                v = w; fv = fw; w = x; fw = fx; x = u; fx = fu;
            }
            else
            {
                if (u < x) a = u; else b = u;
                if (fu <= fw || w == x) { v = w; fv = fw; w = u; fw = fu; }
                else if (fu <= fv || v == x || v == w) { v = u; fv = fu; }
            }
        }
        // Brent never evaluates the end points; a maximum on the boundary must be checked explicitly.
        double best = x, fBest = -fx;
        double fLower = f(lower), fUpper = f(upper);
        if (fLower > fBest) { best = lower; fBest = fLower; }
        if (fUpper > fBest) best = upper;
        return best;
    }

    /// <summary>Coarse scan over <paramref name="nodes"/> equally spaced points, then Brent around the best one.</summary>
    public static double MaximizeWithScan(Func<double, double> f, double lower, double upper, int nodes, double tolerance)
    {
        double step = (upper - lower) / (nodes - 1);
        int bestIndex = 0;
        double bestValue = double.NegativeInfinity;
        for (int i = 0; i < nodes; i++)
        {
            double value = f(lower + i * step);
            if (value > bestValue) { bestValue = value; bestIndex = i; }
        }
        double lo = lower + Math.Max(0, bestIndex - 1) * step;
        double hi = lower + Math.Min(nodes - 1, bestIndex + 1) * step;
        return Maximize(f, lo, hi, tolerance);
    }
}
