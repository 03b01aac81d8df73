using Forecast.Core.Omori;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Posterior;

/// <summary>
/// Bayesian blending of a generic Reasenberg-Jones parameter set with the observed sequence, in the spirit of
/// Reasenberg &amp; Jones (1989), Science 243, 1173-1176: prior = independent normals on a, b, p and log10 c with
/// the set's spreads; likelihood = Omori-Utsu times (K = 10^(a + b (Mm - Mc)), Ogata 1983) times Gutenberg-Richter
/// magnitudes, over the events <c>M &gt;= Mc</c> in [S, T]; integrated deterministically on a grid.
/// </summary>
/// <remarks>
/// No events and no window (<c>T &lt;= S</c>): the likelihood is exactly 1 and the posterior is the prior (to the
/// quadrature's accuracy, about 1e-9). No events in a real window (<c>T &gt; S</c>) is information: the term
/// <c>exp(-K A)</c> lowers the productivity. The grid's log10 c range starts from a Laplace approximation
/// (prior precision plus the fit's observed information) when the Omori fit converged, else from the prior, and is
/// widened or narrowed until the posterior has no weight on its edges and enough nodes across its bulk.
/// </remarks>
public static class RjPosterior
{
    const int MaxAttempts = 6;
    const int MaxGammaNodes = 4;   // at most 4 x CNodes log10 c nodes after widening
    const double EdgeTolerance = 1e-9;
    const double GammaMin = -8, GammaMax = 4;   // c between 1e-8 and 1e4 days: beyond any use (project choice)

    /// <summary>Computes the posterior of <paramref name="prior"/> updated by <paramref name="data"/>.</summary>
    public static PosteriorResult Compute(GenericParameterSet prior, AftershockData data, PosteriorOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(prior);
        ArgumentNullException.ThrowIfNull(data);
        prior.Validate();
        data.Validate();
        options ??= new PosteriorOptions();
        CheckOptions(options);

        var model = BuildModel(prior, data);
        OmoriFit? fit = FitIfPossible(model, options);
        var (low, high) = InitialGammaRange(model, fit, options.HalfWidthSd);
        var grid = new PosteriorGrid(model, options, low, (high - low) / (options.CNodes - 1));
        var range = new GammaNodes(0, options.CNodes);

        bool coverageOk = false;
        int attempts = 0;
        var assessed = range;
        while (attempts < MaxAttempts && !coverageOk)
        {
            attempts++;
            assessed = range;
            var next = Assess(grid.Marginal(range.First, range.Count), grid, range, options);
            coverageOk = next.Ok;
            if (coverageOk) break;
            if (attempts == MaxAttempts || (next.Recentre is null && next.Range == range)) break;
            if (next.Recentre is { } recentre)
            {
                grid = new PosteriorGrid(model, options, recentre.Low, (recentre.High - recentre.Low) / (options.CNodes - 1));
                range = new GammaNodes(0, options.CNodes);
            }
            else
            {
                range = next.Range;
            }
        }
        var nodes = grid.Nodes(assessed.First, assessed.Count, model.DeltaM, options.PruneBelow);
        var summary = Summarise(nodes);
        string message = $"{model.N} event(s) with M >= {data.Mc} in [{data.SDays}, {data.TDays}] d; " +
            $"{nodes.Count} grid nodes after {attempts} pass(es)" +
            (coverageOk ? "." : "; WARNING: the posterior still reaches the edge of the log10 c range.");
        return new PosteriorResult(prior, data.MainshockMagnitude, data.Mc, model.N, fit, nodes, summary, coverageOk, message);
    }

    static PosteriorModel BuildModel(GenericParameterSet prior, AftershockData data)
    {
        // Binned magnitudes are stored as decimals: accept a bin centre a hair below Mc as complete.
        double mcTolerance = 1e-6 * data.BinWidth;
        var times = new List<double>();
        double sumExcess = 0;
        bool window = data.TDays > data.SDays;
        for (int i = 0; i < data.TimesDays.Length && window; i++)
        {
            double t = data.TimesDays[i];
            if (t < data.SDays || t > data.TDays || data.Magnitudes[i] < data.Mc - mcTolerance) continue;
            times.Add(t);
            sumExcess += data.Magnitudes[i] - (data.Mc - data.BinWidth / 2);
        }
        return new PosteriorModel(prior, times.ToArray(), times.Count, sumExcess,
            data.MainshockMagnitude, data.Mc, data.SDays, Math.Max(data.SDays, data.TDays));
    }

    static OmoriFit? FitIfPossible(PosteriorModel model, PosteriorOptions options)
    {
        if (model.TDays <= model.SDays) return null;
        return OmoriUtsu.Fit(model.Times, model.SDays, model.TDays, options.Fit);
    }

    /// <summary>
    /// Laplace approximation in (kappa, b, p, gamma): precision = fit information + prior precision (the prior on
    /// a = kappa - b dM contributes u u^T / sigma_a^2 with u = (1, -dM, 0, 0)); mean = precision^-1 (information x
    /// MLE + prior precision x prior mean). Only its log10 c mean and sd are used, to place the c nodes.
    /// </summary>
    internal static (double Low, double High) InitialGammaRange(PosteriorModel model, OmoriFit? fit, double halfWidthSd)
    {
        double centre = model.MuGamma, sd = model.SigmaGamma;
        if (fit is { Status: OmoriFitStatus.Converged, Covariance: not null } &&
            SymmetricMatrix.TryInvertPositiveDefinite(fit.Covariance, out var dataInfo) && double.IsFinite(model.BHat))
        {
            var (mean, covariance) = LaplaceCombination(model, fit, dataInfo);
            if (covariance is not null && double.IsFinite(mean[3]))
            {
                centre = mean[3];
                sd = Math.Sqrt(covariance[3, 3]);
            }
        }
        return (Math.Max(GammaMin, centre - halfWidthSd * sd), Math.Min(GammaMax, centre + halfWidthSd * sd));
    }

    static (double[] Mean, double[,]? Covariance) LaplaceCombination(PosteriorModel model, OmoriFit fit, double[,] dataInfo)
    {
        // Fit information is in (log10 K, log10 c, p); map to indices (0, 3, 2) of (kappa, b, p, gamma).
        int[] map = [0, 3, 2];
        double[] mle = [Math.Log10(fit.K), model.BHat, fit.P, Math.Log10(fit.C)];
        var precision = new double[4, 4];
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                precision[map[i], map[j]] = dataInfo[i, j];
        precision[1, 1] = model.MagnitudeCount / (model.BHat * model.BHat);
        var linear = new double[4];
        for (int i = 0; i < 4; i++)
            for (int j = 0; j < 4; j++)
                linear[i] += precision[i, j] * mle[j];
        double[] u = [1, -model.DeltaM, 0, 0];
        double sa2 = model.SigmaA * model.SigmaA;
        for (int i = 0; i < 4; i++)
        {
            linear[i] += u[i] * model.MuA / sa2;
            for (int j = 0; j < 4; j++) precision[i, j] += u[i] * u[j] / sa2;
        }
        precision[1, 1] += 1 / (model.SigmaB * model.SigmaB);
        precision[2, 2] += 1 / (model.SigmaP * model.SigmaP);
        precision[3, 3] += 1 / (model.SigmaGamma * model.SigmaGamma);
        linear[1] += model.MuB / (model.SigmaB * model.SigmaB);
        linear[2] += model.MuP / (model.SigmaP * model.SigmaP);
        linear[3] += model.MuGamma / (model.SigmaGamma * model.SigmaGamma);
        if (!SymmetricMatrix.TryInvertPositiveDefinite(precision, out var covariance)) return ([double.NaN, 0, 0, double.NaN], null);
        var mean = new double[4];
        for (int i = 0; i < 4; i++)
            for (int j = 0; j < 4; j++)
                mean[i] += covariance[i, j] * linear[j];
        return (mean, covariance);
    }

    /// <summary>Lattice nodes <c>First .. First + Count - 1</c> of a <see cref="PosteriorGrid"/>.</summary>
    readonly record struct GammaNodes(int First, int Count);

    readonly record struct Assessment(bool Ok, GammaNodes Range, (double Low, double High)? Recentre);

    /// <summary>
    /// Checks the log10 c marginal. Weight on an end node means the range is too short on that side: extend it by
    /// half its width at the same spacing (skewed marginals need this; the slices already computed are kept). A
    /// posterior sd below one node spacing is under-resolved: re-centre on its mean with the default number of
    /// nodes across +-HalfWidthSd sd (a new lattice).
    /// </summary>
    static Assessment Assess(double[] marginal, PosteriorGrid grid, GammaNodes range, PosteriorOptions options)
    {
        int n = marginal.Length;
        double step = grid.Step, low = grid.Gamma(range.First), high = grid.Gamma(range.First + range.Count - 1);
        double max = marginal.Max();
        bool lowEdge = marginal[0] > EdgeTolerance * max && low > GammaMin;
        bool highEdge = marginal[n - 1] > EdgeTolerance * max && high < GammaMax;
        if (lowEdge || highEdge)
        {
            int extra = Math.Max(1, (n - 1) / 2);
            int addLow = lowEdge ? Math.Min(extra, (int)Math.Floor((low - GammaMin) / step)) : 0;
            int addHigh = highEdge ? Math.Min(extra, (int)Math.Floor((GammaMax - high) / step)) : 0;
            if (addLow + addHigh == 0 || n + addLow + addHigh > MaxGammaNodes * options.CNodes) return new(false, range, null);
            return new(false, new GammaNodes(range.First - addLow, n + addLow + addHigh), null);
        }
        double mean = 0, second = 0;
        for (int i = 0; i < n; i++) mean += marginal[i] * (low + i * step);
        for (int i = 0; i < n; i++) second += marginal[i] * Math.Pow(low + i * step - mean, 2);
        double sd = Math.Sqrt(second);
        if (sd < step)
        {
            double sdGuess = Math.Max(sd, step / 8);
            return new(false, range, (Math.Max(GammaMin, mean - options.HalfWidthSd * sdGuess),
                Math.Min(GammaMax, mean + options.HalfWidthSd * sdGuess)));
        }
        return new(true, range, null);
    }

    internal static PosteriorSummary Summarise(IReadOnlyList<PosteriorNode> nodes)
    {
        var mean = new double[4];
        foreach (var node in nodes)
        {
            mean[0] += node.Weight * node.A;
            mean[1] += node.Weight * node.B;
            mean[2] += node.Weight * node.P;
            mean[3] += node.Weight * node.Log10C;
        }
        var covariance = new double[4, 4];
        var d = new double[4];
        foreach (var node in nodes)
        {
            d[0] = node.A - mean[0]; d[1] = node.B - mean[1]; d[2] = node.P - mean[2]; d[3] = node.Log10C - mean[3];
            for (int i = 0; i < 4; i++)
                for (int j = 0; j < 4; j++)
                    covariance[i, j] += node.Weight * d[i] * d[j];
        }
        return new PosteriorSummary(mean[0], mean[1], mean[2], mean[3],
            Math.Sqrt(covariance[0, 0]), Math.Sqrt(covariance[1, 1]), Math.Sqrt(covariance[2, 2]), Math.Sqrt(covariance[3, 3]),
            covariance);
    }

    static void CheckOptions(PosteriorOptions o)
    {
        if (o.CNodes < 5 || o.PNodes < 5 || o.KNodes < 5 || o.BNodes < 5)
            throw new ArgumentException("Every grid dimension needs at least 5 nodes.", nameof(o));
        if (!(o.HalfWidthSd >= 3) || !(o.BHalfWidthSd >= 3))
            throw new ArgumentException("Grid half-widths below 3 standard deviations would cut off posterior mass.", nameof(o));
        if (!(o.PruneBelow is >= 0 and < 1e-6))
            throw new ArgumentException($"PruneBelow must be in [0, 1e-6), got {o.PruneBelow}.", nameof(o));
    }
}
