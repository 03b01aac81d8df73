using MathNet.Numerics.Random;
using MathNet.Numerics.Statistics;

namespace Forecast.Core.Completeness;

/// <summary>Non-parametric bootstrap of a statistic of a magnitude sample (Efron 1979, Ann. Stat. 7, 1-26,
/// from memory), as Woessner &amp; Wiemer (2005) use it for Mc.</summary>
internal static class Bootstrap
{
    /// <summary>Standard deviation of <paramref name="statistic"/> over <paramref name="samples"/> resamples with
    /// replacement; NaN when fewer than two resamples or an empty sample.</summary>
    /// <remarks>The Mersenne Twister of MathNet is seeded explicitly: same seed, same answer on every run and
    /// runtime (System.Random's seeded sequence is not promised across .NET versions).</remarks>
    public static double StandardDeviation(
        ReadOnlySpan<double> magnitudes, int samples, int seed, Func<double[], double> statistic)
    {
        if (samples < 2 || magnitudes.IsEmpty) return double.NaN;
        var random = new MersenneTwister(seed);
        var resample = new double[magnitudes.Length];
        var values = new List<double>(samples);
        for (var s = 0; s < samples; s++)
        {
            for (var i = 0; i < resample.Length; i++) resample[i] = magnitudes[random.Next(magnitudes.Length)];
            var value = statistic(resample);
            if (double.IsFinite(value)) values.Add(value);
        }
        return values.Count < 2 ? double.NaN : values.StandardDeviation();
    }

    public static void CheckArguments(int samples)
    {
        if (samples < 0)
            throw new ArgumentOutOfRangeException(nameof(samples), samples, "Bootstrap samples must be zero or more.");
    }
}
