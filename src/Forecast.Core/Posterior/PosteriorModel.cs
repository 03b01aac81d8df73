using Forecast.Core.Omori;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Posterior;

/// <summary>
/// The unnormalised log posterior of the Reasenberg-Jones parameters, written in kappa = log10 K, b, p and
/// gamma = log10 c, where <c>K = 10^(a + b (Mm - Mc))</c> (Reasenberg &amp; Jones 1989) so <c>a = kappa - b dM</c>,
/// <c>dM = Mm - Mc</c>, a change of variables with unit Jacobian.
/// </summary>
/// <remarks>
/// log posterior = Omori-Utsu time log-likelihood <c>N ln K - p sum ln(t_i + c) - K A(c, p)</c> (Ogata 1983)
/// + Gutenberg-Richter magnitude log-likelihood <c>n ln beta - beta S</c>, <c>beta = b ln 10</c>,
/// <c>S = sum (M_i - (Mc - dM/2))</c> (Aki 1965 with Utsu's half-bin shift)
/// + independent normal log priors on a, b, p and log10 c with the generic set's means and spreads.
/// In these coordinates the data separate: times inform (kappa, p, c), magnitudes inform b; only the prior on a
/// couples b to kappa. That is what makes every grid node O(1) once <c>sum ln(t_i + c)</c> is known per c.
/// </remarks>
internal sealed class PosteriorModel
{
    static readonly double Ln10 = Math.Log(10);

    public PosteriorModel(GenericParameterSet prior, double[] times, int magnitudeCount, double sumExcess,
        double mainshockMagnitude, double mc, double sDays, double tDays)
    {
        Times = times;
        N = times.Length;
        MagnitudeCount = magnitudeCount;
        SumExcess = sumExcess;
        SDays = sDays;
        TDays = tDays;
        DeltaM = mainshockMagnitude - mc;
        MuA = prior.Mean.A; SigmaA = prior.SigmaA;
        MuB = prior.Mean.B; SigmaB = prior.SigmaB;
        MuP = prior.Mean.P; SigmaP = prior.SigmaP;
        MuGamma = Math.Log10(prior.Mean.C); SigmaGamma = prior.SigmaLog10C;
        (BCentre, KappaPriorMean, KappaPriorVariance) = EffectiveKappaPrior();
    }

    public double[] Times { get; }
    public int N { get; }
    public int MagnitudeCount { get; }
    public double SumExcess { get; }
    public double SDays { get; }
    public double TDays { get; }
    public double DeltaM { get; }
    public double MuA { get; }
    public double SigmaA { get; }
    public double MuB { get; }
    public double SigmaB { get; }
    public double MuP { get; }
    public double SigmaP { get; }
    public double MuGamma { get; }
    public double SigmaGamma { get; }

    /// <summary>Approximate posterior centre of b from its prior and the magnitudes alone.</summary>
    public double BCentre { get; }

    /// <summary>Normal approximation of the prior on kappa once b is integrated out: used only to centre grids.</summary>
    public double KappaPriorMean { get; }
    public double KappaPriorVariance { get; }

    /// <summary>Aki-Utsu b from the magnitudes, <c>n / (S ln 10)</c>; NaN without magnitudes.</summary>
    public double BHat => MagnitudeCount > 0 && SumExcess > 0 ? MagnitudeCount / (Ln10 * SumExcess) : double.NaN;

    /// <summary><c>sum ln(t_i + c)</c>: the one O(N) quantity, computed once per c node.</summary>
    public double SumLog(double c) => N == 0 ? 0 : OmoriFitter.SumLog(Times, c);

    public double Integral(double c, double p) => OmoriUtsu.IntegralUnchecked(c, p, SDays, TDays);

    /// <summary>Time log-likelihood at (kappa, p) given the per-c sum and <c>A(c, p)</c>.</summary>
    public double TimeLogLikelihood(double kappa, double p, double sumLog, double integral) =>
        N * Ln10 * kappa - p * sumLog - Math.Pow(10, kappa) * integral;

    public double MagnitudeLogLikelihood(double b) =>
        MagnitudeCount == 0 ? 0 : MagnitudeCount * Math.Log(b * Ln10) - b * Ln10 * SumExcess;

    public double LogPriorA(double a) => -0.5 * Square((a - MuA) / SigmaA);
    public double LogPriorB(double b) => -0.5 * Square((b - MuB) / SigmaB);
    public double LogPriorP(double p) => -0.5 * Square((p - MuP) / SigmaP);
    public double LogPriorGamma(double gamma) => -0.5 * Square((gamma - MuGamma) / SigmaGamma);

    /// <summary>
    /// Mode and curvature in kappa of <c>N ln10 kappa - 10^kappa A - (kappa - m)^2 / (2 s^2)</c>, the time likelihood
    /// times the effective kappa prior: a concave function, solved by damped Newton steps.
    /// </summary>
    public (double Kappa, double Curvature, double Value) KappaMode(double integral)
    {
        double m = KappaPriorMean, s2 = KappaPriorVariance;
        double kappa = N > 0 && integral > 0 ? Math.Log10(N / integral) : m;
        for (int i = 0; i < 200; i++)
        {
            double tenK = Math.Pow(10, kappa) * integral;
            double gradient = N * Ln10 - Ln10 * tenK - (kappa - m) / s2;
            double curvature = Ln10 * Ln10 * tenK + 1 / s2;
            double step = Math.Clamp(gradient / curvature, -3, 3);
            kappa += step;
            if (Math.Abs(step) < 1e-12 * Math.Max(1, Math.Abs(kappa))) break;
        }
        double tenKFinal = Math.Pow(10, kappa) * integral;
        double value = N * Ln10 * kappa - tenKFinal - 0.5 * (kappa - m) * (kappa - m) / s2;
        return (kappa, Ln10 * Ln10 * tenKFinal + 1 / s2, value);
    }

    /// <summary>
    /// Mode and curvature in b of the exact conditional of b given kappa:
    /// <c>n ln b - b ln10 S - (kappa - b dM - mu_a)^2 / (2 sigma_a^2) - (b - mu_b)^2 / (2 sigma_b^2)</c> (concave for b &gt; 0).
    /// </summary>
    public (double B, double Curvature) BMode(double kappa)
    {
        double b = BCentre;
        double curvature = 0;
        for (int i = 0; i < 200; i++)
        {
            double residualA = kappa - b * DeltaM - MuA;
            double gradient = DeltaM * residualA / (SigmaA * SigmaA) - (b - MuB) / (SigmaB * SigmaB)
                + (MagnitudeCount > 0 ? MagnitudeCount / b - Ln10 * SumExcess : 0);
            curvature = DeltaM * DeltaM / (SigmaA * SigmaA) + 1 / (SigmaB * SigmaB)
                + (MagnitudeCount > 0 ? MagnitudeCount / (b * b) : 0);
            double step = Math.Clamp(gradient / curvature, -0.5, 0.5);
            double next = b + step;
            if (MagnitudeCount > 0 && next <= 0) next = b / 2;   // the magnitude likelihood has no mass at b <= 0
            if (Math.Abs(next - b) < 1e-13 * Math.Max(1, Math.Abs(b))) { b = next; break; }
            b = next;
        }
        return (b, curvature);
    }

    (double BCentre, double Mean, double Variance) EffectiveKappaPrior()
    {
        // Normal approximation: b from prior x magnitudes (precision n / b_hat^2), then kappa = a + b dM.
        double precisionB = 1 / (SigmaB * SigmaB);
        double weighted = MuB * precisionB;
        double bHat = BHat;
        if (double.IsFinite(bHat))
        {
            precisionB += MagnitudeCount / (bHat * bHat);
            weighted += MagnitudeCount / bHat;
        }
        double bCentre = weighted / precisionB;
        return (bCentre, MuA + DeltaM * bCentre, SigmaA * SigmaA + DeltaM * DeltaM / precisionB);
    }

    static double Square(double x) => x * x;
}
