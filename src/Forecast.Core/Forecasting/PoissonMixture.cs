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
    readonly int firstNormal;        // bins ascend in mean: those from here on are above ExactLimit
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
        var (lo, hi, total) = Check(means, logMeans, weights);
        (binMeans, binWeights) = Merge(means, logMeans, weights, lo, hi, total, new Scratch());
        (binSds, firstNormal) = Normal(binMeans);
        exactCdf = ExactComponentsCdf(binMeans, binWeights);
        upperK = UpperK(binMeans);
    }

    PoissonMixture(double[] binMeans, double[] binWeights)
    {
        (this.binMeans, this.binWeights) = (binMeans, binWeights);
        (binSds, firstNormal) = Normal(binMeans);
        exactCdf = ExactComponentsCdf(binMeans, binWeights);
        upperK = UpperK(binMeans);
    }

    /// <summary>Bin accumulators reused from one mixture to the next by a caller that builds many.</summary>
    internal sealed class Scratch
    {
        public readonly double[] Weight = new double[Bins];
        public readonly double[] WeightedMean = new double[Bins];
    }

    /// <summary>
    /// For a caller that has already checked the components: every mean finite and &gt;= 0, every weight positive
    /// and finite, <paramref name="lnLow"/> and <paramref name="lnHigh"/> the extremes of <paramref name="logMeans"/>
    /// and <paramref name="totalWeight"/> the sum of the weights. The same mixture as the constructor, one pass fewer.
    /// </summary>
    internal static PoissonMixture FromChecked(ReadOnlySpan<double> means, ReadOnlySpan<double> logMeans,
        ReadOnlySpan<double> weights, double lnLow, double lnHigh, double totalWeight, Scratch scratch)
    {
        var (m, w) = Merge(means, logMeans, weights, lnLow, lnHigh, totalWeight, scratch);
        return new PoissonMixture(m, w);
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
        for (int i = firstNormal; i < binMeans.Length; i++)
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

    static (double Low, double High, double Total) Check(ReadOnlySpan<double> means, ReadOnlySpan<double> logMeans, ReadOnlySpan<double> weights)
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
        return (lo, hi, total);
    }

    /// <summary>Merges the components into ln-bins; bins without weight are left out, so means ascend.</summary>
    static (double[] Means, double[] Weights) Merge(ReadOnlySpan<double> means, ReadOnlySpan<double> logMeans,
        ReadOnlySpan<double> weights, double lo, double hi, double total, Scratch scratch)
    {
        int bins = hi - lo < 1e-12 ? 1 : Bins;
        double perLn = bins / (hi - lo);   // bins per unit of ln N: one multiply per component instead of a division
        var w = scratch.Weight.AsSpan(0, bins);
        var wn = scratch.WeightedMean.AsSpan(0, bins);
        w.Clear();
        wn.Clear();
        for (int i = 0; i < means.Length; i++)
        {
            if (weights[i] == 0) continue;
            int bin = bins == 1 ? 0 : Math.Min(bins - 1, (int)((logMeans[i] - lo) * perLn));
            w[bin] += weights[i];
            wn[bin] += weights[i] * means[i];
        }
        int used = 0;
        foreach (double x in w) if (x > 0) used++;
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

    static (double[] Sds, int FirstNormal) Normal(double[] means)
    {
        var sds = new double[means.Length];
        int first = means.Length;
        for (int i = means.Length - 1; i >= 0; i--)
        {
            sds[i] = Math.Sqrt(means[i]);
            if (means[i] > ExactLimit) first = i;
        }
        return (sds, first);
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
        // Multiplications by tabulated reciprocals: the recursion is a chain, and a division in it would set its pace.
        double value = anchor, inverseMean = 1 / mean;
        var reciprocal = Reciprocals;
        for (long k = mode; k <= high; k++)
        {
            pmf[k] += weight * value;
            value *= mean * (k + 1 < reciprocal.Length ? reciprocal[k + 1] : 1.0 / (k + 1));
        }
        value = anchor;
        for (long k = mode - 1; k >= low; k--)
        {
            value *= (k + 1) * inverseMean;
            pmf[k] += weight * value;
        }
    }

    /// <summary><c>1 / k</c> for every k an exact component's window reaches.</summary>
    static readonly double[] Reciprocals = Enumerable.Range(0, (int)Window(ExactLimit).High + 2)
        .Select(k => k == 0 ? 0 : 1.0 / k).ToArray();

    static long UpperK(double[] means)
    {
        long top = 1;
        foreach (double mean in means) top = Math.Max(top, Window(mean).High);
        return top;
    }
}
