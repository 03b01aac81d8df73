using Forecast.Core.Omori;

namespace Forecast.Core.Posterior;

/// <summary>
/// Deterministic nested product-trapezoid quadrature of the posterior over (log10 c, p, kappa, b).
/// </summary>
/// <remarks>
/// log10 c takes nodes on a fixed lattice <c>origin + j step</c>, so <c>sum ln(t_i + c)</c> is one pass per node,
/// and a range that is widened keeps every slice already computed (the slice of node j does not depend on the
/// range; only its trapezoid end weight does, and that is applied when the nodes are collected). Inside, each level
/// is centred on its conditional mode with a width from its conditional curvature, so the grid follows the strong
/// c-p-K correlation of Omori fits instead of wasting nodes on an axis-aligned box:
/// p given c from the profile over kappa (Laplace-corrected), kappa given (c, p) by Newton, b given kappa by
/// Newton on its exact conditional. A node's weight is the posterior density times the product of the trapezoid
/// weights of its levels. Slices are computed in parallel, each into its own arrays, and every sum is sequential
/// in node order, so the output is bit-for-bit reproducible.
/// </remarks>
internal sealed class PosteriorGrid(PosteriorModel model, PosteriorOptions options, double origin, double step)
{
    const double PMin = 0.01, PMax = 6;   // p outside this range is not physical for these windows (project choice)

    /// <summary>Mass the lightest nodes may carry together and still be dropped (project choice). A probability,
    /// being a posterior mean of a number in [0, 1], moves by at most this much, far below the 0.1 % a forecast
    /// reports; on rich sequences about half the nodes carry this little, and the table's work halves with them.
    /// </summary>
    public const double PrunedMass = 1e-7;

    /// <summary>One log10 c node: its nodes in (p, kappa, b) order, log weights without the log10 c trapezoid weight.
    /// </summary>
    sealed class Slice(int size)
    {
        public readonly double[] Kappa = new double[size], B = new double[size], P = new double[size];
        public readonly double[] LogWeight = new double[size];

        /// <summary>ln of the sum of the slice's weights (log-sum-exp of <see cref="LogWeight"/>).</summary>
        public double LogMass { get; private set; }

        public void Sum()
        {
            double max = double.NegativeInfinity;
            foreach (double lw in LogWeight) max = Math.Max(max, lw);
            double sum = 0;
            foreach (double lw in LogWeight) sum += Math.Exp(lw - max);
            LogMass = max + Math.Log(sum);
        }
    }

    readonly Dictionary<int, Slice> slices = [];

    public double Origin => origin;
    public double Step => step;

    /// <summary>log10 c of lattice node <paramref name="j"/>.</summary>
    public double Gamma(int j) => origin + j * step;

    /// <summary>The normalised weight of each log10 c node <paramref name="first"/> .. first + count - 1 (the
    /// trapezoid rule over the nodes of each slice), computing the slices not known yet.</summary>
    /// <remarks>From each slice's own log-sum of weights, so it costs nothing per node; unlike
    /// <see cref="Nodes"/> it prunes nothing, which changes the weights by less than 1e-9 of the total.</remarks>
    public double[] Marginal(int first, int count)
    {
        EnsureSlices(first, count);
        var logMass = new double[count];
        double max = double.NegativeInfinity;
        for (int i = 0; i < count; i++)
        {
            logMass[i] = slices[first + i].LogMass + EndWeight(i, count);
            max = Math.Max(max, logMass[i]);
        }
        double total = 0;
        var marginal = new double[count];
        for (int i = 0; i < count; i++) total += marginal[i] = Math.Exp(logMass[i] - max);
        for (int i = 0; i < count; i++) marginal[i] /= total;
        return marginal;
    }

    /// <summary>The normalised nodes on lattice nodes <paramref name="first"/> .. first + count - 1, computing the
    /// slices not known yet.</summary>
    /// <remarks>Weights below <see cref="PosteriorOptions.PruneBelow"/> of the largest are dropped, then the
    /// lightest nodes carrying together at most <see cref="PrunedMass"/> of the total (found with a histogram of
    /// log weights in steps of 1/4, so without a sort), and the rest normalised. Sequential sums: reproducible.
    /// </remarks>
    public List<PosteriorNode> Nodes(int first, int count, double deltaM, double pruneBelow)
    {
        EnsureSlices(first, count);
        int sliceSize = options.PNodes * options.KNodes * options.BNodes;
        var logWeights = new double[count * sliceSize];
        double logStep = Math.Log(step), max = double.NegativeInfinity;
        for (int i = 0; i < count; i++)
        {
            var slice = slices[first + i];
            double add = logStep + EndWeight(i, count);
            for (int k = 0; k < sliceSize; k++)
            {
                double lw = logWeights[i * sliceSize + k] = slice.LogWeight[k] + add;
                if (lw > max) max = lw;
            }
        }

        const double BucketsPerUnit = 4;
        double threshold = Math.Log(pruneBelow);
        var raw = new double[logWeights.Length];
        var bucketMass = new double[(int)(-threshold * BucketsPerUnit) + 2];
        double total = 0;
        for (int i = 0; i < raw.Length; i++)
        {
            double rel = logWeights[i] - max;
            if (rel < threshold) continue;
            raw[i] = Math.Exp(rel);
            total += raw[i];
            bucketMass[Bucket(rel)] += raw[i];
        }
        // Drop whole buckets from the lightest end while their mass stays within PrunedMass of the total.
        int cut = bucketMass.Length;
        for (double dropped = 0; cut > 1 && dropped + bucketMass[cut - 1] <= PrunedMass * total; cut--)
            dropped += bucketMass[cut - 1];
        double kept = 0;
        int keptCount = 0;
        for (int i = 0; i < raw.Length; i++)
        {
            if (raw[i] != 0 && Bucket(logWeights[i] - max) >= cut) raw[i] = 0;
            kept += raw[i];
            if (raw[i] != 0) keptCount++;
        }

        var nodes = new List<PosteriorNode>(keptCount);
        for (int i = 0; i < raw.Length; i++)
        {
            if (raw[i] == 0) continue;
            int g = i / sliceSize, k = i % sliceSize;
            var slice = slices[first + g];
            nodes.Add(new PosteriorNode(slice.Kappa[k] - slice.B[k] * deltaM, slice.B[k], slice.P[k], Gamma(first + g),
                raw[i] / kept));
        }
        return nodes;

        static int Bucket(double rel) => (int)(-rel * BucketsPerUnit);
    }

    void EnsureSlices(int first, int count)
    {
        var missing = Enumerable.Range(first, count).Where(j => !slices.ContainsKey(j)).ToArray();
        var computed = new Slice[missing.Length];
        try
        {
            Parallel.For(0, missing.Length, i => computed[i] = ComputeSlice(Gamma(missing[i])));
        }
        catch (AggregateException e) when (e.InnerExceptions.Count > 0)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(e.InnerExceptions[0]);
        }
        for (int i = 0; i < missing.Length; i++) slices[missing[i]] = computed[i];
    }

    Slice ComputeSlice(double gamma)
    {
        var slice = new Slice(options.PNodes * options.KNodes * options.BNodes);
        double c = Math.Pow(10, gamma);
        double sumLog = model.SumLog(c);
        var (pLow, pHigh) = PRange(model, c, sumLog, options.HalfWidthSd);
        double pStep = (pHigh - pLow) / (options.PNodes - 1);
        double logBase = model.LogPriorGamma(gamma);
        int at = 0;
        for (int j = 0; j < options.PNodes; j++)
        {
            double p = pLow + j * pStep;
            double logP = logBase + Math.Log(pStep) + EndWeight(j, options.PNodes) + model.LogPriorP(p);
            AddPSlice(slice, ref at, c, p, sumLog, logP);
        }
        slice.Sum();
        return slice;
    }

    void AddPSlice(Slice slice, ref int at, double c, double p, double sumLog, double logBase)
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
            AddBSlice(slice, ref at, p, kappa, logK);
        }
    }

    void AddBSlice(Slice slice, ref int at, double p, double kappa, double logBase)
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
            slice.Kappa[at] = kappa;
            slice.B[at] = b;
            slice.P[at] = p;
            slice.LogWeight[at] = logBase + logStep + (l == 0 || l == options.BNodes - 1 ? endWeight : 0)
                + model.MagnitudeLogLikelihood(b) + model.LogPriorA(a) + model.LogPriorB(b);
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
}
