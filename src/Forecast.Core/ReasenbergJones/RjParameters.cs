namespace Forecast.Core.ReasenbergJones;

/// <summary>Reasenberg-Jones model parameters: <c>lambda(t, M) = 10^(A + B (Mm - M)) (t + C)^(-P)</c> per day.</summary>
/// <param name="A">Productivity a (dimensionless, log10 events per day at Mm - M = 0 and t + c = 1 d).</param>
/// <param name="B">Gutenberg-Richter b-value.</param>
/// <param name="P">Omori decay exponent p.</param>
/// <param name="C">Omori c in days.</param>
public sealed record RjParameters(double A, double B, double P, double C)
{
    internal void Check()
    {
        if (!double.IsFinite(A)) throw new ArgumentException($"a must be finite, got {A}.", nameof(A));
        if (!(B > 0) || double.IsInfinity(B)) throw new ArgumentException($"b must be positive and finite, got {B}.", nameof(B));
        if (!double.IsFinite(P)) throw new ArgumentException($"p must be finite, got {P}.", nameof(P));
        if (!(C > 0) || double.IsInfinity(C)) throw new ArgumentException($"c must be positive and finite (days), got {C}.", nameof(C));
    }
}
