using Forecast.Core.Omori;
using Forecast.Core.Simulation;

namespace Forecast.Core.Tests.Omori;

public class OmoriRecoveryTests
{
    const int Replicas = 200;
    const double TrueK = 300, TrueC = 0.05, TrueP = 1.1, TrueB = 1.0, Mc = 2.0, BinWidth = 0.1;

    [Fact]
    public void MaximumLikelihoodIsUnbiasedAndItsIntervalsCoverTheTruth()
    {
        // Seeded synthetic sequences of about 2,150 events each (K A = 300 x 7.18 on [0, 100] d).
        var errors = new List<double[]>();
        var covered = new int[4];
        var spec = new SimulatedSequenceSpec(6.5, new DateTime(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc),
            TrueK, TrueC, TrueP, TrueB, Mc, 0, 100) { BinWidth = BinWidth };
        for (int r = 0; r < Replicas; r++)
        {
            var catalog = new SequenceSimulator(1000 + r).Simulate(spec);
            double[] times = catalog.Skip(1).Select(e => (e.TimeUtc - spec.OriginTimeUtc).TotalDays).ToArray();
            double[] magnitudes = catalog.Skip(1).Select(e => e.Magnitude).ToArray();
            var fit = OmoriUtsu.Fit(times, 0, 100);
            Assert.Equal(OmoriFitStatus.Converged, fit.Status);
            var (b, sigmaB) = TintiMulargia(magnitudes);
            double[] error =
            [
                fit.P - TrueP, Math.Log10(fit.C) - Math.Log10(TrueC), Math.Log10(fit.K) - Math.Log10(TrueK), b - TrueB,
            ];
            double[] sigma = [fit.SigmaP, fit.SigmaLog10C, fit.SigmaLog10K, sigmaB];
            for (int i = 0; i < 4; i++)
                if (Math.Abs(error[i]) <= 1.96 * sigma[i]) covered[i]++;
            errors.Add(error);
        }
        string[] names = ["p", "log10 c", "log10 K", "b"];
        for (int i = 0; i < 4; i++)
        {
            double mean = errors.Average(e => e[i]);
            double sd = Math.Sqrt(errors.Sum(e => Math.Pow(e[i] - mean, 2)) / (Replicas - 1));
            // Bias within two standard errors of the mean of 200 replicas.
            Assert.True(Math.Abs(mean) <= 2 * sd / Math.Sqrt(Replicas), $"{names[i]}: bias {mean:G3}, se {sd / Math.Sqrt(Replicas):G3}");
            // Nominal 95 % intervals: 90-99 % coverage allows for binomial noise (sd 1.5 % at 200 replicas).
            double coverage = covered[i] / (double)Replicas;
            Assert.True(coverage is >= 0.90 and <= 0.99, $"{names[i]}: coverage {coverage:P1}");
        }
    }

    /// <summary>Tinti &amp; Mulargia (1987) exact binned estimator as written in METHODS.md, with the Shi &amp; Bolt
    /// (1982) sigma; written here so the test does not depend on the production b-value code.</summary>
    static (double B, double Sigma) TintiMulargia(double[] magnitudes)
    {
        double mean = magnitudes.Average();
        double b = Math.Log(1 + BinWidth / (mean - Mc)) / (BinWidth * Math.Log(10));
        int n = magnitudes.Length;
        double sigma = 2.3 * b * b * Math.Sqrt(magnitudes.Sum(m => (m - mean) * (m - mean)) / (n * (double)(n - 1)));
        return (b, sigma);
    }
}
