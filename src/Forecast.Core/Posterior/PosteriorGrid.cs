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
/// weights of its levels. Each c slice fills its own fixed range of the node arrays (slices run in parallel) and
/// every sum is sequential in node order, so the output is bit-for-bit reproducible.
/// </remarks>
internal sealed class PosteriorGrid
{
    const double PMin = 0.01, PMax = 6;   // p outside this range is not physical for these windows (project choice)

    // One slot per node, sized up front (gamma x p x kappa x b nodes): no list growth, no copies.
    double[] kappas = [], bs = [], ps = [], gammas = [], logWeights = [];
    int[] gammaIndex = [];

    public int GammaNodes { get; private init; }
    public double GammaLow { get; private init; }
    public double GammaStep { get; private init; }

    /// <summary>Builds the grid on <paramref name="gammaCount"/> log10 c nodes from <paramref name="gammaLow"/>.</summary>
    public static PosteriorGrid Build(PosteriorModel model, double gammaLow, double gammaStep, int gammaCount, PosteriorOptions options)
    {
        var grid = new PosteriorGrid { GammaNodes = gammaCount, GammaLow = gammaLow, GammaStep = gammaStep };
        int sliceSize = options.PNodes * options.KNodes * options.BNodes;
        grid.Allocate(gammaCount * sliceSize);
        // The c slices are independent and each fills its own fixed range of the node arrays, so running them in
        // parallel gives the same arrays, in the same order, as running them one after the other.
        void Slice(int i)
        {
            double gamma = gammaLow + i * gammaStep;
            double logTrapezoid = Math.Log(gammaStep) + EndWeight(i, gammaCount);
            grid.AddGammaSlice(model, options, i, i * sliceSize, gamma, logTrapezoid + model.LogPriorGamma(gamma));
        }
        try
        {
            Parallel.For(0, gammaCount, Slice);
        }
        catch (AggregateException e) when (e.InnerExceptions.Count > 0)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(e.InnerExceptions[0]);
        }
        return grid;
    }

    void Allocate(int nodes)
    {
        (kappas, bs, ps, gammas, logWeights) = (new double[nodes], new double[nodes], new double[nodes], new double[nodes], new double[nodes]);
        gammaIndex = new int[nodes];
    }

    void AddGammaSlice(PosteriorModel model, PosteriorOptions options, int index, int at, double gamma, double logBase)
    {
        double c = Math.Pow(10, gamma);
        double sumLog = model.SumLog(c);
        var (pLow, pHigh) = PRange(model, c, sumLog, options.HalfWidthSd);
        double pStep = (pHigh - pLow) / (options.PNodes - 1);
        for (int j = 0; j < options.PNodes; j++)
        {
            double p = pLow + j * pStep;
            double logP = logBase + Math.Log(pStep) + EndWeight(j, options.PNodes) + model.LogPriorP(p);
            AddPSlice(model, options, index, ref at, gamma, c, p, sumLog, logP);
        }
    }

    void AddPSlice(PosteriorModel model, PosteriorOptions options, int index, ref int at, double gamma, double c, double p,
        double sumLog, double logBase)
    {
        double integral = model.Integral(c, p);
        var (kappaMode, curvature, _) = model.KappaMode(integral);
        double half = options.HalfWidthSd / Math.Sqrt(curvature);
        double kStep = 2 * half / (options.KNodes - 1);
        double logStep = Math.Log(kStep);
        for (int k = 0; k < options.KNodes; k++)
        {
            double kappa = kappaMode - half + k * kStep;
            double logK = logBase + logStep + EndWeight(k, options.KNodes)
                + model.TimeLogLikelihood(kappa, p, sumLog, integral);
            AddBSlice(model, options, index, ref at, gamma, p, kappa, logK);
        }
    }

    void AddBSlice(PosteriorModel model, PosteriorOptions options, int index, ref int at, double gamma, double p, double kappa,
        double logBase)
    {
        var (bMode, curvature) = model.BMode(kappa);
        double half = options.BHalfWidthSd / Math.Sqrt(curvature);
        double bLow = Math.Max(1e-6, bMode - half), bHigh = bMode + half;
        double bStep = (bHigh - bLow) / (options.BNodes - 1);
        // Terms that do not change along b are evaluated once per slice: the same values, so the same sums, bit for bit.
        double logStep = Math.Log(bStep), endWeight = EndWeight(0, options.BNodes);
        for (int l = 0; l < options.BNodes; l++, at++)
        {
            double b = bLow + l * bStep;
            double a = kappa - b * model.DeltaM;
            double logW = logBase + logStep + (l == 0 || l == options.BNodes - 1 ? endWeight : 0)
                + model.MagnitudeLogLikelihood(b) + model.LogPriorA(a) + model.LogPriorB(b);
            kappas[at] = kappa;
            bs[at] = b;
            ps[at] = p;
            gammas[at] = gamma;
            gammaIndex[at] = index;
            logWeights[at] = logW;
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

    static readonly double LogHalf = -Math.Log(2);

    static double EndWeight(int i, int count) => i == 0 || i == count - 1 ? LogHalf : 0;

    /// <summary>Exponentiates, prunes and normalises the weights (sequential sums: bit-for-bit reproducible).</summary>
    public List<PosteriorNode> Normalise(double deltaM, double pruneBelow, out double[] gammaMarginal)
    {
        double max = double.NegativeInfinity;
        foreach (double lw in logWeights) if (lw > max) max = lw;
        double threshold = Math.Log(pruneBelow);
        double total = 0;
        int kept = 0;
        var raw = new double[logWeights.Length];
        for (int i = 0; i < raw.Length; i++)
        {
            double rel = logWeights[i] - max;
            raw[i] = rel < threshold ? 0 : Math.Exp(rel);
            total += raw[i];
            if (raw[i] != 0) kept++;
        }
        gammaMarginal = new double[GammaNodes];
        var nodes = new List<PosteriorNode>(kept);
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
