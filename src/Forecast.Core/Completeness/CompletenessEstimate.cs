namespace Forecast.Core.Completeness;

/// <summary>How a completeness magnitude was found.</summary>
public enum CompletenessMethod
{
    /// <summary>Maximum curvature plus a correction (Woessner &amp; Wiemer 2005).</summary>
    MaximumCurvature,

    /// <summary>Goodness-of-fit test reached 95 % (Wiemer &amp; Wyss 2000).</summary>
    GoodnessOfFit95,

    /// <summary>Goodness-of-fit test reached 90 % but not 95 % (Wiemer &amp; Wyss 2000).</summary>
    GoodnessOfFit90,

    /// <summary>The goodness-of-fit test reached neither level; maximum curvature plus correction used
    /// instead.</summary>
    MaximumCurvatureFallback,
}

/// <summary>A completeness magnitude with its bootstrap uncertainty and the inputs that produced it.</summary>
/// <param name="Mc">Completeness magnitude, on the bin grid (NaN when there are no magnitudes).</param>
/// <param name="Sigma">Standard deviation of Mc over the bootstrap resamples; NaN when fewer than two resamples
/// were asked for.</param>
/// <param name="Method">Which method produced <paramref name="Mc"/>.</param>
/// <param name="Count">Number of magnitudes given (all of them, not only those above Mc).</param>
/// <param name="CountAtOrAboveMc">Number of magnitudes in the Mc bin or above.</param>
/// <param name="BinWidth">Magnitude bin width used.</param>
/// <param name="BootstrapSamples">Number of bootstrap resamples.</param>
/// <param name="Seed">Seed of the bootstrap random stream.</param>
/// <param name="Residual">For the goodness-of-fit methods, the residual R (per cent) at Mc; NaN otherwise.</param>
/// <param name="Note">Plain words on any fallback; empty otherwise.</param>
public sealed record CompletenessEstimate(
    double Mc, double Sigma, CompletenessMethod Method, int Count, int CountAtOrAboveMc, double BinWidth,
    int BootstrapSamples, int Seed, double Residual, string Note);
