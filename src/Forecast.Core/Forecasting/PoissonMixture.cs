using MathNet.Numerics;

namespace Forecast.Core.Forecasting;

/// <summary>Quantiles of a weighted mixture of Poisson distributions: the forecast number distribution.</summary>
/// <remarks>
/// Parameter uncertainty makes the count a mixture <c>sum_j w_j Poisson(N_j)</c> (Reasenberg &amp; Jones 1989).
/// To keep the cost independent of the number of posterior nodes, the means are first merged into at most
/// <see cref="Bins"/> bins of equal width in ln N, each carrying its total weight and its weighted mean N
/// (so the mixture mean is kept exactly; within a bin ln N varies by at most its range over the nodes
/// divided by <see cref="Bins"/>). Components with mean up to <see cref="ExactLimit"/> use the exact Poisson
/// probabilities (recursion from the mode, in a window of 8 standard deviations + 8 either side); larger
/// ones use the normal approximation with continuity correction (common practice), whose quantiles may differ
/// from the exact ones by one count. Quantile q is the smallest k with mixture CDF(k) &gt;= q.
/// </remarks>
public sealed class PoissonMixture
{
    /// <summary>Most bins the means are merged into.</summary>
    public const int Bins = 256;

    /// <summary>Largest component mean treated exactly.</summary>
    public const double ExactLimit = 1000;

    readonly double[] binMeans;
    readonly double[] binWeights;
    readonly double[] binSds;
    readonly double[] exactCdf;      // weighted CDF of the exact components, k = 0 .. exactCdf.Length - 1
    readonly long upperK;

    /// <summary>Builds the mixture; weights need not be normalised but must be non-negative with a positive sum.</summary>
    public PoissonMixture(ReadOnlySpan<double> means, ReadOnlySpan<double> weights)
        : this(means, LogsOf(means), weights)
    {
    }

    /// <summary>As the public constructor, with <c>ln N</c> supplied by a caller that already has it.</summary>
    internal PoissonMixture(ReadOnlySpan<double> means, ReadOnlySpan<double> logMeans, ReadOnlySpan<double> weights)
    {
        if (means.Length != weights.Length) throw new ArgumentException($"{means.Length} means but {weights.Length} weights.", nameof(weights));
        if (means.Length == 0) throw new ArgumentException("A mixture needs at least one component.", nameof(means));
        (binMeans, binWeights) = Merge(means, logMeans, weights);
        binSds = binMeans.Select(Math.Sqrt).ToArray();
        exactCdf = ExactComponentsCdf(binMeans, binWeights);
        upperK = UpperK(binMeans);
    }

    /// <summary>Mixture mean <c>sum w_j N_j</c>.</summary>
    public double Mean
    {
        get
        {
            double mean = 0;
            for (int i = 0; i < binMeans.Length; i++) mean += binWeights[i] * binMeans[i];
            return mean;
        }
    }

    /// <summary>Mixture CDF <c>P(X &lt;= k)</c>.</summary>
    public double Cdf(long k)
    {
        if (k < 0) return 0;
        double total = exactCdf.Length == 0 ? 0 : exactCdf[(int)Math.Min(k, exactCdf.Length - 1)];
        // Bins ascend in mean, so z = (k + 0.5 - N) / sqrt(N) descends: whole weight while z > 9, nothing once z < -9
        // (the normal tail beyond 9 sd is below 1e-18); only the bins in between need erfc.
        for (int i = 0; i < binMeans.Length; i++)
        {
            if (binMeans[i] <= ExactLimit) continue;
            double z = (k + 0.5 - binMeans[i]) / binSds[i];
            if (z > 9) { total += binWeights[i]; continue; }
            if (z < -9) break;
            total += binWeights[i] * 0.5 * SpecialFunctions.Erfc(-z / Math.Sqrt(2));
        }
        return Math.Min(1, total);
    }

    /// <summary>Smallest k with <c>CDF(k) &gt;= q</c>, by bisection on k.</summary>
    public long Quantile(double q)
    {
        if (!(q > 0 && q < 1)) throw new ArgumentException($"q must be in (0, 1), got {q}.", nameof(q));
        long lo = 0, hi = upperK;
        if (Cdf(0) >= q) return 0;
        while (Cdf(hi) < q) hi *= 2;   // only if rounding left the bound short
        while (hi - lo > 1)
        {
            long mid = lo + (hi - lo) / 2;
            if (Cdf(mid) >= q) hi = mid; else lo = mid;
        }
        return hi;
    }

    static double[] LogsOf(ReadOnlySpan<double> means)
    {
        var logs = new double[means.Length];
        for (int i = 0; i < logs.Length; i++) logs[i] = Math.Log(Math.Max(means[i], 1e-300));
        return logs;
    }

    static (double[] Means, double[] Weights) Merge(ReadOnlySpan<double> means, ReadOnlySpan<double> logMeans, ReadOnlySpan<double> weights)
    {
        double lo = double.PositiveInfinity, hi = double.NegativeInfinity, total = 0;
        for (int i = 0; i < means.Length; i++)
        {
            if (!(means[i] >= 0) || double.IsInfinity(means[i])) throw new ArgumentException($"Poisson means must be finite and >= 0, got {means[i]}.", nameof(means));
            if (!(weights[i] >= 0) || double.IsInfinity(weights[i])) throw new ArgumentException($"Weights must be finite and >= 0, got {weights[i]}.", nameof(weights));
            if (weights[i] == 0) continue;
            double ln = logMeans[i];
            lo = Math.Min(lo, ln);
            hi = Math.Max(hi, ln);
            total += weights[i];
        }
        if (!(total > 0)) throw new ArgumentException("The weights must have a positive sum.", nameof(weights));
        int bins = hi - lo < 1e-12 ? 1 : Bins;
        double width = (hi - lo) / bins;
        var w = new double[bins];
        var wn = new double[bins];
        for (int i = 0; i < means.Length; i++)
        {
            if (weights[i] == 0) continue;
            int bin = bins == 1 ? 0 : Math.Min(bins - 1, (int)((logMeans[i] - lo) / width));
            w[bin] += weights[i];
            wn[bin] += weights[i] * means[i];
        }
        int used = w.Count(x => x > 0);
        var outMeans = new double[used];
        var outWeights = new double[used];
        for (int b = 0, j = 0; b < bins; b++)
        {
            if (w[b] == 0) continue;
            outMeans[j] = wn[b] / w[b];
            outWeights[j++] = w[b] / total;
        }
        return (outMeans, outWeights);
    }

    static (long Low, long High) Window(double mean)
    {
        double spread = 8 * Math.Sqrt(mean) + 8;   // Poisson tail beyond this is below 1e-14
        return ((long)Math.Max(0, Math.Floor(mean - spread)), (long)Math.Ceiling(mean + spread));
    }

    /// <summary>Weighted CDF of the components with mean up to <see cref="ExactLimit"/>, by exact pmf recursion.</summary>
    static double[] ExactComponentsCdf(double[] means, double[] weights)
    {
        long top = -1;
        for (int i = 0; i < means.Length; i++)
            if (means[i] <= ExactLimit) top = Math.Max(top, Window(means[i]).High);
        var pmf = new double[top + 1];
        for (int i = 0; i < means.Length; i++)
        {
            if (means[i] > ExactLimit) continue;
            AddPoisson(pmf, means[i], weights[i]);
        }
        for (int k = 1; k < pmf.Length; k++) pmf[k] += pmf[k - 1];
        return pmf;
    }

    /// <summary>Adds <c>weight * Poisson(mean)</c> pmf into <paramref name="pmf"/>: recursion up and down from the mode,
    /// anchored by <c>ln pmf(m) = m ln N - N - ln m!</c> so large means do not underflow.</summary>
    static void AddPoisson(double[] pmf, double mean, double weight)
    {
        var (low, high) = Window(mean);
        long mode = (long)Math.Floor(mean);
        if (mean == 0) { pmf[0] += weight; return; }
        double anchor = Math.Exp(mode * Math.Log(mean) - mean - SpecialFunctions.GammaLn(mode + 1));
        double value = anchor;
        for (long k = mode; k <= high; k++)
        {
            pmf[k] += weight * value;
            value *= mean / (k + 1);
        }
        value = anchor;
        for (long k = mode - 1; k >= low; k--)
        {
            value *= (k + 1) / mean;
            pmf[k] += weight * value;
        }
    }

    static long UpperK(double[] means)
    {
        long top = 1;
        foreach (double mean in means) top = Math.Max(top, Window(mean).High);
        return top;
    }
}
