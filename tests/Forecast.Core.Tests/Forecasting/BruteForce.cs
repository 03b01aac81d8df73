using Forecast.Core.Forecasting;
using Forecast.Core.Omori;
using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;
using MathNet.Numerics.Distributions;

namespace Forecast.Core.Tests.Forecasting;

/// <summary>
/// Independent reference: the same posterior (prior x Omori-Utsu x Gutenberg-Richter likelihood) on a plain regular
/// grid in (log10 K, b, p, log10 c), much finer than the production grid, spanning the production posterior's mean
/// +-8 sd in each coordinate; the number quantiles from a 4,000-bin mixture evaluated with MathNet Poisson.CDF.
/// </summary>
internal static class BruteForce
{
    public sealed record Result(double Mean, double Probability, long Median, long Lower, long Upper);

    public static Result Forecast(GenericParameterSet prior, AftershockData data, PosteriorResult engine, ForecastWindow window, double m)
    {
        double ln10 = Math.Log(10), dm = data.MainshockMagnitude - data.Mc;
        double[] t = data.TimesDays.Where((x, i) => x >= data.SDays && x <= data.TDays && data.Magnitudes[i] >= data.Mc - 1e-9).ToArray();
        double[] mags = data.Magnitudes.Where((x, i) => data.TimesDays[i] >= data.SDays && data.TimesDays[i] <= data.TDays && x >= data.Mc - 1e-9).ToArray();
        int n = t.Length;
        double sumExcess = mags.Sum(x => x - (data.Mc - data.BinWidth / 2));

        var kappa = Range(engine.Nodes.Select(x => (x.A + x.B * dm, x.Weight)), 121);
        var bs = Range(engine.Nodes.Select(x => (x.B, x.Weight)), 25);
        var ps = Range(engine.Nodes.Select(x => (x.P, x.Weight)), 49);
        var gs = Range(engine.Nodes.Select(x => (x.Log10C, x.Weight)), 49);

        var logW = new List<double>();
        var numbers = new List<double>();
        foreach (double g in gs)
        {
            double c = Math.Pow(10, g), sumLog = t.Sum(x => Math.Log(x + c));
            foreach (double p in ps)
            {
                double a = OmoriUtsu.Integral(c, p, data.SDays, data.TDays);
                double forecastIntegral = OmoriUtsu.Integral(c, p, window.T1Days, window.T2Days);
                double fixedPart = -p * sumLog + Normal.PDFLn(prior.Mean.P, prior.SigmaP, p) + Normal.PDFLn(Math.Log10(prior.Mean.C), prior.SigmaLog10C, g);
                foreach (double b in bs)
                {
                    double bPart = n * Math.Log(b * ln10) - b * ln10 * sumExcess + Normal.PDFLn(prior.Mean.B, prior.SigmaB, b);
                    foreach (double k in kappa)
                    {
                        double lp = n * ln10 * k - Math.Pow(10, k) * a + fixedPart + bPart + Normal.PDFLn(prior.Mean.A, prior.SigmaA, k - b * dm);
                        logW.Add(lp);
                        numbers.Add(Math.Pow(10, k - b * dm + b * (data.MainshockMagnitude - m)) * forecastIntegral);
                    }
                }
            }
        }
        double max = logW.Max(), total = 0, mean = 0, prob = 0;
        var w = new double[logW.Count];
        for (int i = 0; i < w.Length; i++)
        {
            w[i] = Math.Exp(logW[i] - max);
            total += w[i];
            mean += w[i] * numbers[i];
            prob += w[i] * (1 - Math.Exp(-numbers[i]));
        }
        var (binMeans, binWeights) = Histogram(numbers, w, total, 4000);
        return new Result(mean / total, prob / total,
            Quantile(binMeans, binWeights, 0.5), Quantile(binMeans, binWeights, 0.025), Quantile(binMeans, binWeights, 0.975));
    }

    static double[] Range(IEnumerable<(double X, double W)> weighted, int count)
    {
        var list = weighted.ToList();
        double mean = list.Sum(v => v.X * v.W), sd = Math.Sqrt(list.Sum(v => v.W * (v.X - mean) * (v.X - mean)));
        double lo = mean - 8 * sd, hi = mean + 8 * sd;
        if (lo <= 0 && list.All(v => v.X > 0)) lo = 1e-3;   // b and p are positive
        return Enumerable.Range(0, count).Select(i => lo + (hi - lo) * i / (count - 1)).ToArray();
    }

    static (double[] Means, double[] Weights) Histogram(List<double> numbers, double[] w, double total, int bins)
    {
        double lo = numbers.Min(x => Math.Log(x)), hi = numbers.Max(x => Math.Log(x)), width = (hi - lo) / bins;
        var sw = new double[bins];
        var swn = new double[bins];
        for (int i = 0; i < w.Length; i++)
        {
            int bin = Math.Min(bins - 1, (int)((Math.Log(numbers[i]) - lo) / width));
            sw[bin] += w[i] / total;
            swn[bin] += w[i] / total * numbers[i];
        }
        var keep = Enumerable.Range(0, bins).Where(i => sw[i] > 1e-15).ToArray();
        return (keep.Select(i => swn[i] / sw[i]).ToArray(), keep.Select(i => sw[i]).ToArray());
    }

    static long Quantile(double[] means, double[] weights, double q)
    {
        double Cdf(long k) => means.Select((mu, i) => weights[i] * Poisson.CDF(mu, k)).Sum();
        long lo = -1, hi = (long)(means.Max() + 20 * Math.Sqrt(means.Max()) + 20);
        while (hi - lo > 1)
        {
            long mid = (lo + hi) / 2;
            if (Cdf(mid) >= q) hi = mid; else lo = mid;
        }
        return hi;
    }
}
