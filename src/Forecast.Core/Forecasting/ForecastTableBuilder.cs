using Forecast.Core.Omori;
using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Forecasting;

/// <summary>Forecast tables from a posterior (parameter uncertainty) or from fixed parameters.</summary>
/// <remarks>
/// For each node, <c>N(theta) = 10^(a + b (Mm - M)) integral_{t1}^{t2} (t + c)^(-p) dt</c> (Reasenberg &amp; Jones 1989).
/// The expected number is its posterior mean; the probability of at least one is the posterior mean of
/// <c>1 - exp(-N(theta))</c>, which is below <c>1 - exp(-E N)</c> whenever N varies (Jensen); the number
/// distribution is the posterior-weighted Poisson mixture (<see cref="PoissonMixture"/>).
/// </remarks>
public static class ForecastTableBuilder
{
    static readonly double Ln10 = Math.Log(10);

    /// <summary>One day, one week, one month (30 d) and one year (365 d), each starting at the issue time.</summary>
    public static IReadOnlyList<ForecastWindow> DefaultWindows(double issueDays)
    {
        if (!(issueDays >= 0) || double.IsInfinity(issueDays))
            throw new ArgumentException($"The issue time must be finite and >= 0 days, got {issueDays}.", nameof(issueDays));
        return [new(issueDays, issueDays + 1), new(issueDays, issueDays + 7), new(issueDays, issueDays + 30), new(issueDays, issueDays + 365)];
    }

    /// <summary>M3, M4, M5, M6, M7 and the mainshock magnitude, ascending, without duplicates.</summary>
    public static IReadOnlyList<double> DefaultThresholds(double mainshockMagnitude)
    {
        if (!double.IsFinite(mainshockMagnitude))
            throw new ArgumentException($"The mainshock magnitude must be finite, got {mainshockMagnitude}.", nameof(mainshockMagnitude));
        return new[] { 3.0, 4, 5, 6, 7, mainshockMagnitude }
            .Select(m => Math.Round(m, 6)).Distinct().Order().ToArray();
    }

    /// <summary>The forecast table of <paramref name="posterior"/> for the given windows and thresholds.</summary>
    public static ForecastTable Build(PosteriorResult posterior, IReadOnlyList<ForecastWindow> windows, IReadOnlyList<double> thresholds)
    {
        ArgumentNullException.ThrowIfNull(posterior);
        return Build(posterior.Nodes, posterior.MainshockMagnitude, windows, thresholds);
    }

    /// <summary>The forecast table of fixed parameters (no parameter uncertainty: every number is Poisson).</summary>
    public static ForecastTable BuildFixed(RjParameters parameters, double mainshockMagnitude,
        IReadOnlyList<ForecastWindow> windows, IReadOnlyList<double> thresholds)
    {
        ArgumentNullException.ThrowIfNull(parameters);
        parameters.Check();
        var node = new PosteriorNode(parameters.A, parameters.B, parameters.P, Math.Log10(parameters.C), 1);
        return Build([node], mainshockMagnitude, windows, thresholds);
    }

    /// <summary>The forecast table of any weighted set of nodes (weights summing to 1).</summary>
    public static ForecastTable Build(IReadOnlyList<PosteriorNode> nodes, double mainshockMagnitude,
        IReadOnlyList<ForecastWindow> windows, IReadOnlyList<double> thresholds)
    {
        ArgumentNullException.ThrowIfNull(nodes);
        ArgumentNullException.ThrowIfNull(windows);
        ArgumentNullException.ThrowIfNull(thresholds);
        if (nodes.Count == 0) throw new ArgumentException("A forecast needs at least one parameter node.", nameof(nodes));
        if (!double.IsFinite(mainshockMagnitude)) throw new ArgumentException("The mainshock magnitude must be finite.", nameof(mainshockMagnitude));
        foreach (var m in thresholds)
            if (!double.IsFinite(m)) throw new ArgumentException($"Magnitude thresholds must be finite, got {m}.", nameof(thresholds));

        foreach (var window in windows)
        {
            ArgumentNullException.ThrowIfNull(window);
            window.Check();
        }

        var terms = NodeTerms.From(nodes, mainshockMagnitude, thresholds);
        var logIntegral = new double[windows.Count][];
        var windowFactor = new double[windows.Count][];
        Parallel.For(0, windows.Count, w =>
            terms.LogIntegrals(windows[w], logIntegral[w] = new double[terms.Count], windowFactor[w] = new double[terms.Count]));

        // Cells are independent and each goes to its own slot (window outer, threshold inner), so computing them in
        // parallel gives the same table as computing them in order; each worker reuses its own buffers.
        var cells = new ForecastCell[windows.Count * thresholds.Count];
        try
        {
            Parallel.For(0, cells.Length, () => new CellBuffers(terms.Count), (index, _, buffers) =>
            {
                int w = index / thresholds.Count, j = index % thresholds.Count;
                cells[index] = Cell(terms, j, logIntegral[w], windowFactor[w], buffers, thresholds[j], windows[w]);
                return buffers;
            }, buffers => buffers.Return());
        }
        catch (AggregateException e) when (e.InnerExceptions.Count > 0)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(e.InnerExceptions[0]);
        }
        return new ForecastTable(mainshockMagnitude, cells);
    }

    /// <summary>Per-worker buffers, rented from the shared pool: a worker may serve a single cell, and buffers of
    /// tens of thousands of nodes would otherwise be fresh large-object allocations, zeroed, every time.</summary>
    sealed class CellBuffers(int count)
    {
        public readonly double[] Means = System.Buffers.ArrayPool<double>.Shared.Rent(count);
        public readonly double[] LogMeans = System.Buffers.ArrayPool<double>.Shared.Rent(count);
        public readonly PoissonMixture.Scratch Mixture = new();

        public void Return()
        {
            System.Buffers.ArrayPool<double>.Shared.Return(Means);
            System.Buffers.ArrayPool<double>.Shared.Return(LogMeans);
        }
    }

    /// <summary>
    /// The nodes with positive weight as arrays, with what every cell reuses: <c>10^(b dM_j)</c> per threshold j,
    /// <c>dM_j = Mm - M_j</c>, so that a cell needs no exponential for N (see <see cref="Cell"/>).
    /// </summary>
    sealed class NodeTerms
    {
        public required int Count { get; init; }
        public required double[] A { get; init; }
        public required double[] B { get; init; }
        public required double[] P { get; init; }
        public required double[] Log10C { get; init; }
        public required double[] Weight { get; init; }
        public required double TotalWeight { get; init; }
        public required double[] DeltaM { get; init; }
        public required double[][] ThresholdFactor { get; init; }

        public static NodeTerms From(IReadOnlyList<PosteriorNode> nodes, double mainshockMagnitude, IReadOnlyList<double> thresholds)
        {
            int count = 0;
            double total = 0;
            foreach (var node in nodes)
            {
                double w = node.Weight;
                if (!(w >= 0) || double.IsInfinity(w)) throw new ArgumentException($"Weights must be finite and >= 0, got {w}.", nameof(nodes));
                if (w > 0) count++;
                total += w;
            }
            if (!(total > 0)) throw new ArgumentException("The weights must have a positive sum.", nameof(nodes));
            // Zero weights contribute nothing to any sum or to the mixture: drop them once here.
            var (a, b, p, gamma, weight) = (new double[count], new double[count], new double[count], new double[count], new double[count]);
            int k = 0;
            foreach (var node in nodes)
            {
                if (node.Weight == 0) continue;
                (a[k], b[k], p[k], gamma[k], weight[k]) = (node.A, node.B, node.P, node.Log10C, node.Weight);
                k++;
            }
            var deltaM = new double[thresholds.Count];
            var factor = new double[thresholds.Count][];
            Parallel.For(0, thresholds.Count, j =>
            {
                deltaM[j] = mainshockMagnitude - thresholds[j];
                var f = factor[j] = new double[count];
                for (int i = 0; i < count; i++) f[i] = Math.Exp(Ln10 * b[i] * deltaM[j]);
            });
            return new NodeTerms
            {
                Count = count, A = a, B = b, P = p, Log10C = gamma, Weight = weight, TotalWeight = total,
                DeltaM = deltaM, ThresholdFactor = factor,
            };
        }

        /// <summary>ln of the Omori integral per node and <c>10^a</c> times the integral; consecutive nodes sharing
        /// (p, c) reuse the integral (the grid runs b and K innermost, so runs are long).</summary>
        public void LogIntegrals(ForecastWindow window, double[] logIntegral, double[] windowFactor)
        {
            double lastP = double.NaN, lastGamma = double.NaN, last = 0;
            for (int i = 0; i < Count; i++)
            {
                if (P[i] != lastP || Log10C[i] != lastGamma)
                {
                    last = Math.Log(OmoriUtsu.IntegralUnchecked(Math.Pow(10, Log10C[i]), P[i], window.T1Days, window.T2Days));
                    lastP = P[i];
                    lastGamma = Log10C[i];
                }
                logIntegral[i] = last;
                windowFactor[i] = Math.Exp(Ln10 * A[i] + last);
            }
        }
    }

    /// <remarks>
    /// <c>ln N = ln10 (a + b dM) + ln A(c, p)</c> as written, for the mixture's ln-bins; N itself as the product
    /// <c>(10^a A(c, p)) 10^(b dM)</c> of a per-window and a per-threshold factor, each one exponential per node,
    /// instead of one exponential per node and cell (the product differs from <c>exp(ln N)</c> by an ulp or two;
    /// <c>exp(ln N)</c> is used wherever the product is not a positive finite number).
    /// </remarks>
    static ForecastCell Cell(NodeTerms terms, int threshold, double[] logIntegral, double[] windowFactor,
        CellBuffers buffers, double minMagnitude, ForecastWindow window)
    {
        double[] means = buffers.Means, logMeans = buffers.LogMeans;
        double expected = 0, probability = 0;
        double lo = double.PositiveInfinity, hi = double.NegativeInfinity;
        double deltaM = terms.DeltaM[threshold];
        double[] a = terms.A, b = terms.B, weights = terms.Weight, thresholdFactor = terms.ThresholdFactor[threshold];
        int count = terms.Count;
        for (int i = 0; i < count; i++)
        {
            double logN = Ln10 * (a[i] + b[i] * deltaM) + logIntegral[i];
            double n = windowFactor[i] * thresholdFactor[i];
            if (!(n > 0 && n < double.PositiveInfinity)) n = Math.Exp(logN);
            means[i] = n;
            logMeans[i] = logN;
            // Plain comparisons: logN is never NaN here, and Math.Min/Max pay for NaN handling on every node.
            if (logN < lo) lo = logN;
            if (logN > hi) hi = logN;
            expected += weights[i] * n;
            // exp(-40) is below half an ulp of 1, so 1 - exp(-N) is exactly 1 there.
            probability += weights[i] * (n > 40 ? 1 : -Precise.Expm1(-n));
        }
        if (!double.IsFinite(expected))
        {
            foreach (double n in means.AsSpan(0, count))
                if (!double.IsFinite(n)) throw new ArgumentException($"Poisson means must be finite and >= 0, got {n}.", nameof(terms));
        }
        var mixture = PoissonMixture.FromChecked(means.AsSpan(0, count), logMeans.AsSpan(0, count), weights, lo, hi,
            terms.TotalWeight, buffers.Mixture);
        // Normalised weights sum to 1 only to a few ulp: divide by their sum so a probability never exceeds 1.
        expected /= terms.TotalWeight;
        probability = Math.Clamp(probability / terms.TotalWeight, 0, 1);
        return new ForecastCell(window, minMagnitude, expected, probability,
            mixture.Quantile(0.5), mixture.Quantile(0.025), mixture.Quantile(0.975));
    }
}
