namespace Forecast.Core.GutenbergRichter;

/// <summary>One b-value estimator's answer.</summary>
/// <param name="B">The b-value; NaN when there are no events, +infinity when every magnitude is in the lowest bin
/// (the likelihood then grows without bound in b; see <paramref name="Note"/>).</param>
/// <param name="Sigma">Shi &amp; Bolt (1982) standard error; NaN when n &lt; 2 or <paramref name="B"/> is not
/// finite.</param>
/// <param name="Count">Number of magnitudes used (at or above Mc).</param>
/// <param name="Method">Estimator name, e.g. "Tinti-Mulargia 1987" or "Aki-Utsu".</param>
/// <param name="Summary">The sufficient statistics the value came from (holds Mc, Mmin and dM).</param>
/// <param name="Note">Empty when the value is usable; otherwise why it is not.</param>
public sealed record BValueEstimate(
    double B, double Sigma, int Count, string Method, MagnitudeSummary Summary, string Note)
{
    /// <summary>True when <see cref="B"/> is a finite positive number.</summary>
    public bool IsDefined => double.IsFinite(B) && B > 0;
}

/// <summary>The b-value the forecasts use, with the evidence beside it.</summary>
/// <param name="B">The b-value to use: <paramref name="TintiMulargiaB"/>, or <paramref name="GenericB"/> when
/// <paramref name="UsesGenericB"/>.</param>
/// <param name="TintiMulargiaB">Exact binned maximum-likelihood b (Tinti &amp; Mulargia 1987); NaN or +infinity
/// when undefined.</param>
/// <param name="AkiUtsuB">Aki (1965) / Utsu (1966) b, reported beside it for comparison.</param>
/// <param name="Sigma">Shi &amp; Bolt (1982) standard error of the data estimate (NaN when undefined). When the
/// generic b is used this is still the data's sigma, not an uncertainty of the generic value.</param>
/// <param name="Count">Number of magnitudes at or above Mc.</param>
/// <param name="UsesGenericB">True when the data could not support an estimate and the generic b is used.</param>
/// <param name="Reason">Why the generic b is used; empty otherwise.</param>
/// <param name="GenericB">The generic b offered as fallback.</param>
/// <param name="MinEvents">The fewest events at or above Mc accepted for a data estimate.</param>
/// <param name="Summary">The sufficient statistics (Mc, Mmin, dM, n, S).</param>
public sealed record BValueResult(
    double B, double TintiMulargiaB, double AkiUtsuB, double Sigma, int Count,
    bool UsesGenericB, string Reason, double GenericB, int MinEvents, MagnitudeSummary Summary);
