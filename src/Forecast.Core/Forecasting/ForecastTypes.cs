namespace Forecast.Core.Forecasting;

/// <summary>A forecast window in days after the mainshock.</summary>
public sealed record ForecastWindow(double T1Days, double T2Days)
{
    internal void Check()
    {
        if (!(T1Days >= 0) || !(T2Days > T1Days) || double.IsInfinity(T2Days))
            throw new ArgumentException($"A forecast window needs 0 <= t1 < t2 < infinity, got [{T1Days}, {T2Days}] d.", nameof(T1Days));
    }
}

/// <summary>The forecast for one window and magnitude threshold.</summary>
/// <param name="Window">The time window.</param>
/// <param name="MinMagnitude">Counts events of this magnitude and above.</param>
/// <param name="ExpectedNumber">Posterior mean of the expected number N(theta).</param>
/// <param name="ProbabilityOfAtLeastOne">Posterior mean of <c>1 - exp(-N(theta))</c>.</param>
/// <param name="Median">Median of the number distribution (Poisson mixture).</param>
/// <param name="Lower95">2.5 per cent quantile of the number.</param>
/// <param name="Upper95">97.5 per cent quantile of the number.</param>
public sealed record ForecastCell(
    ForecastWindow Window, double MinMagnitude, double ExpectedNumber, double ProbabilityOfAtLeastOne,
    long Median, long Lower95, long Upper95);

/// <summary>Forecast cells for every window (outer) and threshold (inner), in the order requested.</summary>
public sealed record ForecastTable(double MainshockMagnitude, IReadOnlyList<ForecastCell> Cells);
