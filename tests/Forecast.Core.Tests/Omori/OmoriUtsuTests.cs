using Forecast.Core.Omori;
using Forecast.Core.Simulation;
using MathNet.Numerics;
using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.Optimization;

namespace Forecast.Core.Tests.Omori;

public class OmoriUtsuTests
{
    static readonly DateTime Origin = new(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);

    [Theory]
    [InlineData(0.05, 1.0, 0.0, 7.0)]
    [InlineData(0.05, 1.0 + 1e-9, 0.0, 7.0)]
    [InlineData(0.05, 1.0 - 1e-9, 0.0, 7.0)]
    [InlineData(0.05, 0.99, 0.0, 7.0)]
    [InlineData(0.05, 1.5, 0.0, 7.0)]
    [InlineData(0.01, 1.08, 0.5, 365.0)]
    [InlineData(1e-4, 1.2, 0.0, 30.0)]
    [InlineData(2.0, 0.6, 1.0, 1000.0)]
    [InlineData(0.3, 2.5, 0.0, 10.0)]
    [InlineData(0.05, 1.0, 3.0, 3.0000001)]
    public void ClosedFormIntegralMatchesGaussKronrod(double c, double p, double s, double t)
    {
        // Reference: MathNet Integrate.GaussKronrod. Wide windows are integrated in u = ln((x + c)/(S + c)), where the
        // integrand (S + c)^(1-p) exp((1 - p) u) is smooth even for tiny c; short windows directly in x.
        double expected = t - s < 1
            ? Integrate.GaussKronrod(x => Math.Pow(x + c, -p), s, t, 1e-15, 10, 15)
            : Integrate.GaussKronrod(u => Math.Pow(s + c, 1 - p) * Math.Exp((1 - p) * u), 0, Math.Log((t + c) / (s + c)), 1e-15, 10, 15);
        Assert.Equal(expected, OmoriUtsu.Integral(c, p, s, t), 1e-12 * Math.Max(1, expected));
        Assert.Equal(1, OmoriUtsu.Integral(c, p, s, t) / expected, 1e-11);
    }

    [Fact]
    public void IntegralAtPEqualOneIsTheLogarithmExactly()
    {
        // Ogata (1983): A = ln((T + c)/(S + c)) at p = 1.
        Assert.Equal(Math.Log(7.05 / 0.05), OmoriUtsu.Integral(0.05, 1, 0, 7), 1e-14);
    }

    [Fact]
    public void IntegralIsContinuousAcrossPEqualOne()
    {
        // The raw difference loses about half the digits at |1 - p| = 1e-9; the expm1 form must not.
        double atOne = OmoriUtsu.Integral(0.05, 1, 0, 365);
        Assert.Equal(atOne, OmoriUtsu.Integral(0.05, 1 + 1e-12, 0, 365), 1e-10);
        Assert.Equal(atOne, OmoriUtsu.Integral(0.05, 1 - 1e-12, 0, 365), 1e-10);
    }

    [Theory]
    [InlineData(0.0, 0.0, 1.0, 1.0)]
    [InlineData(0.05, 5.0, 4.0, 1.0)]
    [InlineData(0.05, -1.0, 1.0, 1.0)]
    [InlineData(0.05, 0.0, 1.0, double.NaN)]
    public void BadArgumentsAreRejectedWithClearMessages(double c, double s, double t, double p)
    {
        var error = Assert.Throws<ArgumentException>(() => OmoriUtsu.Integral(c, p, s, t));
        Assert.False(string.IsNullOrWhiteSpace(error.Message));
    }

    [Fact]
    public void MaximumLikelihoodEstimateSatisfiesTheScoreEquations()
    {
        double[] times = Simulate(seed: 11, k: 200, c: 0.05, p: 1.1, s: 0, t: 100);
        var fit = OmoriUtsu.Fit(times, 0, 100);
        Assert.Equal(OmoriFitStatus.Converged, fit.Status);
        // Numerical gradient of log L (central differences in ln K, ln c, p) is zero at the optimum.
        double[] x = [Math.Log(fit.K), Math.Log(fit.C), fit.P];
        for (int i = 0; i < 3; i++)
        {
            double h = 1e-5;
            double[] up = (double[])x.Clone(), down = (double[])x.Clone();
            up[i] += h;
            down[i] -= h;
            double gradient = (LogL(times, 100, up) - LogL(times, 100, down)) / (2 * h);
            Assert.True(Math.Abs(gradient) < 1e-2, $"component {i}: score {gradient}");
        }
    }

    [Fact]
    public void MaximumLikelihoodEstimateMatchesNelderMeadOnTheFullLikelihood()
    {
        double[] times = Simulate(seed: 12, k: 100, c: 0.1, p: 1.2, s: 0, t: 60);
        var fit = OmoriUtsu.Fit(times, 0, 60);
        Assert.Equal(OmoriFitStatus.Converged, fit.Status);
        // Reference: MathNet NelderMeadSimplex on -log L in (ln K, ln c, p), started away from the answer.
        var objective = ObjectiveFunction.Value(v => -LogL(times, 60, [v[0], v[1], v[2]]));
        var start = Vector<double>.Build.Dense([Math.Log(fit.K) + 0.5, Math.Log(fit.C) - 1, fit.P + 0.3]);
        var nm = NelderMeadSimplex.Minimum(objective, start, 1e-14, 100_000);
        Assert.Equal(nm.MinimizingPoint[2], fit.P, 1e-3);
        Assert.Equal(nm.MinimizingPoint[1], Math.Log(fit.C), 1e-2);
        Assert.Equal(nm.MinimizingPoint[0], Math.Log(fit.K), 1e-2);
        Assert.True(fit.LogLikelihood >= -nm.FunctionInfoAtMinimum.Value - 1e-8);
    }

    [Fact]
    public void StandardErrorsMatchTheInverseOfAFiniteDifferenceHessian()
    {
        double[] times = Simulate(seed: 13, k: 150, c: 0.05, p: 1.05, s: 0, t: 200);
        var fit = OmoriUtsu.Fit(times, 0, 200);
        Assert.Equal(OmoriFitStatus.Converged, fit.Status);
        // Reference: MathNet inverse of the finite-difference Hessian of -log L in (ln K, ln c, p).
        double[] x = [Math.Log(fit.K), Math.Log(fit.C), fit.P];
        var hessian = Matrix<double>.Build.Dense(3, 3);
        double h = 1e-4;
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
            {
                double F(double di, double dj)
                {
                    double[] y = (double[])x.Clone();
                    y[i] += di;
                    y[j] += dj;
                    return -LogL(times, 200, y);
                }
                hessian[i, j] = (F(h, h) - F(h, -h) - F(-h, h) + F(-h, -h)) / (4 * h * h);
            }
        var covariance = hessian.Inverse();
        double ln10 = Math.Log(10);
        Assert.Equal(Math.Sqrt(covariance[0, 0]) / ln10, fit.SigmaLog10K, 1e-3 * fit.SigmaLog10K);
        Assert.Equal(Math.Sqrt(covariance[1, 1]) / ln10, fit.SigmaLog10C, 1e-3 * fit.SigmaLog10C);
        Assert.Equal(Math.Sqrt(covariance[2, 2]), fit.SigmaP, 1e-3 * fit.SigmaP);
    }

    [Fact]
    public void FitUsesOnlyTimesInsideTheUserWindow()
    {
        double[] all = Simulate(seed: 14, k: 150, c: 0.05, p: 1.1, s: 0, t: 100);
        double[] inside = all.Where(t => t >= 0.5 && t <= 40).ToArray();
        // Same window, two inputs that differ only outside it, must give the same fit bit for bit.
        var fromAll = OmoriUtsu.Fit(all, 0.5, 40);
        var fromInside = OmoriUtsu.Fit(inside, 0.5, 40);
        Assert.Equal(inside.Length, fromAll.EventCount);
        Assert.Equal(fromInside.K, fromAll.K);
        Assert.Equal(fromInside.C, fromAll.C);
        Assert.Equal(fromInside.P, fromAll.P);
    }

    [Fact]
    public void EventsOnTheWindowEdgesCount()
    {
        double[] times = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
        Assert.Equal(6, OmoriUtsu.Fit(times, 1.0, 6.0).EventCount);
    }

    [Fact]
    public void NegativeTimesUnsortedInputAndDuplicatesAreHandled()
    {
        double[] sorted = Simulate(seed: 15, k: 120, c: 0.05, p: 1.1, s: 0, t: 50);
        var reference = OmoriUtsu.Fit(sorted, 0, 50);
        // Foreshocks (negative times) are ignored; order does not matter.
        double[] shuffled = sorted.Reverse().Concat([-3.0, -0.01]).ToArray();
        var fit = OmoriUtsu.Fit(shuffled, 0, 50);
        Assert.Equal(reference.EventCount, fit.EventCount);
        // Summation order changes the last bits of sum ln(t + c); the optimum moves by far less than its sd.
        Assert.Equal(reference.P, fit.P, 1e-6);
        Assert.Equal(reference.C, fit.C, 1e-5 * reference.C);
        // Duplicate times are legitimate events (catalog time resolution) and just count twice.
        double[] doubled = sorted.Concat(sorted.Take(5)).ToArray();
        var withDuplicates = OmoriUtsu.Fit(doubled, 0, 50);
        Assert.Equal(sorted.Length + 5, withDuplicates.EventCount);
        Assert.True(double.IsFinite(withDuplicates.P));
    }

    [Fact]
    public void ASingleAftershockIsReportedAsTooFewEvents()
    {
        var fit = OmoriUtsu.Fit([0.3], 0, 10);
        Assert.Equal(OmoriFitStatus.TooFewEvents, fit.Status);
        Assert.Equal(1, fit.EventCount);
        Assert.Contains("at least", fit.Message, StringComparison.Ordinal);
        Assert.True(double.IsNaN(fit.P));
    }

    [Fact]
    public void MissingEarlyEventsPushCToItsUpperBoundOrReportIt()
    {
        // Uniform times on [0, 10] d: no decay at all, so the best fit is a huge c or p at its lower bound.
        double[] times = Enumerable.Range(0, 200).Select(i => 0.05 * i).ToArray();
        var fit = OmoriUtsu.Fit(times, 0, 10);
        Assert.True(fit.Status is OmoriFitStatus.CAtBound or OmoriFitStatus.PAtBound, fit.Message);
        Assert.False(string.IsNullOrWhiteSpace(fit.Message));
    }

    [Fact]
    public void LogLikelihoodIgnoresTimesOutsideTheWindow()
    {
        // Ogata (1983) log L with N = 2: 2 ln K - p (ln 1.05 + ln 2.05) - K A(c, p) on [0, 5].
        double expected = 2 * Math.Log(3) - 1.1 * (Math.Log(1.05) + Math.Log(2.05)) - 3 * OmoriUtsu.Integral(0.05, 1.1, 0, 5);
        Assert.Equal(expected, OmoriUtsu.LogLikelihood([1.0, 2.0, 7.0, -1.0], 0, 5, 3, 0.05, 1.1), 1e-12);
    }

    internal static double[] Simulate(int seed, double k, double c, double p, double s, double t) =>
        new SequenceSimulator(seed).OmoriTimes(k, c, p, s, t);

    static double LogL(double[] times, double tEnd, double[] x) =>
        OmoriUtsu.LogLikelihood(times, 0, tEnd, Math.Exp(x[0]), Math.Exp(x[1]), x[2]);
}
