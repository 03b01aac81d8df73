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

        var cells = new List<ForecastCell>(windows.Count * thresholds.Count);
        var means = new double[nodes.Count];
        var logMeans = new double[nodes.Count];
        var weights = new double[nodes.Count];
        var a = new double[nodes.Count];
        var b = new double[nodes.Count];
        for (int i = 0; i < nodes.Count; i++) (weights[i], a[i], b[i]) = (nodes[i].Weight, nodes[i].A, nodes[i].B);
        foreach (var window in windows)
        {
            ArgumentNullException.ThrowIfNull(window);
            window.Check();
            double[] logIntegral = LogIntegrals(nodes, window);
            foreach (double m in thresholds)
                cells.Add(Cell(a, b, weights, logIntegral, means, logMeans, mainshockMagnitude, m, window));
        }
        return new ForecastTable(mainshockMagnitude, cells);
    }

    /// <summary>ln of the Omori integral per node; consecutive nodes sharing (p, c) reuse the value.</summary>
    static double[] LogIntegrals(IReadOnlyList<PosteriorNode> nodes, ForecastWindow window)
    {
        var result = new double[nodes.Count];
        double lastP = double.NaN, lastGamma = double.NaN, last = 0;
        for (int i = 0; i < nodes.Count; i++)
        {
            var node = nodes[i];
            if (node.P != lastP || node.Log10C != lastGamma)
            {
                last = Math.Log(OmoriUtsu.IntegralUnchecked(Math.Pow(10, node.Log10C), node.P, window.T1Days, window.T2Days));
                lastP = node.P;
                lastGamma = node.Log10C;
            }
            result[i] = last;
        }
        return result;
    }

    static ForecastCell Cell(double[] a, double[] b, double[] weights, double[] logIntegral, double[] means,
        double[] logMeans, double mainshockMagnitude, double minMagnitude, ForecastWindow window)
    {
        double expected = 0, probability = 0, totalWeight = 0;
        double deltaM = mainshockMagnitude - minMagnitude;
        for (int i = 0; i < a.Length; i++)
        {
            double logN = Ln10 * (a[i] + b[i] * deltaM) + logIntegral[i];
            double n = Math.Exp(logN);
            means[i] = n;
            logMeans[i] = logN;
            expected += weights[i] * n;
            totalWeight += weights[i];
            // exp(-40) is below half an ulp of 1, so 1 - exp(-N) is exactly 1 there.
            probability += weights[i] * (n > 40 ? 1 : -Precise.Expm1(-n));
        }
        var mixture = new PoissonMixture(means, logMeans, weights);
        // Normalised weights sum to 1 only to a few ulp: divide by their sum so a probability never exceeds 1.
        expected /= totalWeight;
        probability = Math.Clamp(probability / totalWeight, 0, 1);
        return new ForecastCell(window, minMagnitude, expected, probability,
            mixture.Quantile(0.5), mixture.Quantile(0.025), mixture.Quantile(0.975));
    }
}
