using Forecast.Core.Omori;

namespace Forecast.Core.Posterior;

/// <summary>
/// Deterministic nested product-trapezoid quadrature of the posterior over (log10 c, p, kappa, b).
/// </summary>
/// <remarks>
/// log10 c takes fixed nodes on a given range, so <c>sum ln(t_i + c)</c> is one pass per node. Inside, each level
/// is centred on its conditional mode with a width from its conditional curvature, so the grid follows the strong
/// c-p-K correlation of Omori fits instead of wasting nodes on an axis-aligned box:
/// p given c from the profile over kappa (Laplace-corrected), kappa given (c, p) by Newton, b given kappa by
/// Newton on its exact conditional. A node's weight is the posterior density times the product of the trapezoid
/// weights of its levels. Loops run in one fixed order and sums are sequential, so the output is bit-for-bit
/// reproducible.
/// </remarks>
internal sealed class PosteriorGrid
{
    const double PMin = 0.01, PMax = 6;   // p outside this range is not physical for these windows (project choice)

    readonly List<double> kappas = [], bs = [], ps = [], gammas = [], logWeights = [];
    readonly List<int> gammaIndex = [];

    public int GammaNodes { get; private init; }
    public double GammaLow { get; private init; }
    public double GammaStep { get; private init; }

    /// <summary>Builds the grid on <paramref name="gammaCount"/> log10 c nodes from <paramref name="gammaLow"/>.</summary>
    public static PosteriorGrid Build(PosteriorModel model, double gammaLow, double gammaStep, int gammaCount, PosteriorOptions options)
    {
        var grid = new PosteriorGrid { GammaNodes = gammaCount, GammaLow = gammaLow, GammaStep = gammaStep };
        for (int i = 0; i < gammaCount; i++)
        {
            double gamma = gammaLow + i * gammaStep;
            double logTrapezoid = Math.Log(gammaStep) + EndWeight(i, gammaCount);
            grid.AddGammaSlice(model, options, i, gamma, logTrapezoid + model.LogPriorGamma(gamma));
        }
        return grid;
    }

    void AddGammaSlice(PosteriorModel model, PosteriorOptions options, int index, double gamma, double logBase)
    {
        double c = Math.Pow(10, gamma);
        double sumLog = model.SumLog(c);
        var (pLow, pHigh) = PRange(model, c, sumLog, options.HalfWidthSd);
        double pStep = (pHigh - pLow) / (options.PNodes - 1);
        for (int j = 0; j < options.PNodes; j++)
        {
            double p = pLow + j * pStep;
            double logP = logBase + Math.Log(pStep) + EndWeight(j, options.PNodes) + model.LogPriorP(p);
            AddPSlice(model, options, index, gamma, c, p, sumLog, logP);
        }
    }

    void AddPSlice(PosteriorModel model, PosteriorOptions options, int index, double gamma, double c, double p,
        double sumLog, double logBase)
    {
        double integral = model.Integral(c, p);
        var (kappaMode, curvature, _) = model.KappaMode(integral);
        double half = options.HalfWidthSd / Math.Sqrt(curvature);
        double kStep = 2 * half / (options.KNodes - 1);
        for (int k = 0; k < options.KNodes; k++)
        {
            double kappa = kappaMode - half + k * kStep;
            double logK = logBase + Math.Log(kStep) + EndWeight(k, options.KNodes)
                + model.TimeLogLikelihood(kappa, p, sumLog, integral);
            AddBSlice(model, options, index, gamma, p, kappa, logK);
        }
    }

    void AddBSlice(PosteriorModel model, PosteriorOptions options, int index, double gamma, double p, double kappa,
        double logBase)
    {
        var (bMode, curvature) = model.BMode(kappa);
        double half = options.BHalfWidthSd / Math.Sqrt(curvature);
        double bLow = Math.Max(1e-6, bMode - half), bHigh = bMode + half;
        double bStep = (bHigh - bLow) / (options.BNodes - 1);
        for (int l = 0; l < options.BNodes; l++)
        {
            double b = bLow + l * bStep;
            double a = kappa - b * model.DeltaM;
            double logW = logBase + Math.Log(bStep) + EndWeight(l, options.BNodes)
                + model.MagnitudeLogLikelihood(b) + model.LogPriorA(a) + model.LogPriorB(b);
            kappas.Add(kappa);
            bs.Add(b);
            ps.Add(p);
            gammas.Add(gamma);
            gammaIndex.Add(index);
            logWeights.Add(logW);
        }
    }

    /// <summary>
    /// Range of p for one c: the mode of the kappa-profiled log posterior in p (scan, then Brent), plus or minus
    /// <paramref name="halfWidthSd"/> standard deviations from its curvature (central differences).
    /// </summary>
    static (double Low, double High) PRange(PosteriorModel model, double c, double sumLog, double halfWidthSd)
    {
        double Profile(double p)
        {
            var (_, curvature, value) = model.KappaMode(model.Integral(c, p));
            return value - p * sumLog + model.LogPriorP(p) - 0.5 * Math.Log(curvature);
        }
        double mode = ScalarMaximizer.MaximizeWithScan(Profile, PMin, PMax, 25, 1e-10);
        double sd = CurvatureSd(Profile, mode, 1e-3);
        if (sd < 1e-2) sd = CurvatureSd(Profile, mode, sd / 5);
        if (!double.IsFinite(sd)) sd = model.SigmaP;
        return (Math.Max(PMin, mode - halfWidthSd * sd), Math.Min(PMax, mode + halfWidthSd * sd));
    }

    static double CurvatureSd(Func<double, double> f, double x, double h)
    {
        double lo = Math.Max(PMin, x - h), hi = Math.Min(PMax, x + h), mid = 0.5 * (lo + hi);
        double halfStep = 0.5 * (hi - lo);
        double second = (f(hi) - 2 * f(mid) + f(lo)) / (halfStep * halfStep);
        return second < 0 ? 1 / Math.Sqrt(-second) : double.NaN;
    }

    static double EndWeight(int i, int count) => i == 0 || i == count - 1 ? -Math.Log(2) : 0;

    /// <summary>Exponentiates, prunes and normalises the weights (sequential sums: bit-for-bit reproducible).</summary>
    public List<PosteriorNode> Normalise(double deltaM, double pruneBelow, out double[] gammaMarginal)
    {
        double max = double.NegativeInfinity;
        foreach (double lw in logWeights) if (lw > max) max = lw;
        double threshold = Math.Log(pruneBelow);
        double total = 0;
        var raw = new double[logWeights.Count];
        for (int i = 0; i < raw.Length; i++)
        {
            double rel = logWeights[i] - max;
            raw[i] = rel < threshold ? 0 : Math.Exp(rel);
            total += raw[i];
        }
        gammaMarginal = new double[GammaNodes];
        var nodes = new List<PosteriorNode>();
        for (int i = 0; i < raw.Length; i++)
        {
            if (raw[i] == 0) continue;
            double w = raw[i] / total;
            gammaMarginal[gammaIndex[i]] += w;
            nodes.Add(new PosteriorNode(kappas[i] - bs[i] * deltaM, bs[i], ps[i], gammas[i], w));
        }
        return nodes;
    }
}
