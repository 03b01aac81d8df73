namespace Forecast.Core.Omori;

/// <summary>Accurate <c>log(1 + x)</c> and <c>exp(x) - 1</c> for small x.</summary>
/// <remarks>
/// .NET's <c>double.LogP1</c> and <c>double.ExpM1</c> are computed as <c>Log(1 + x)</c> and <c>Exp(x) - 1</c>, so they
/// lose every digit the stable Omori integral needs. These are Kahan's corrections (Goldberg 1991, ACM Computing
/// Surveys 23, 5-48, theorem 4 for log1p; the expm1 form is its mirror), accurate to a few ulp.
/// </remarks>
internal static class Precise
{
    public static double Log1P(double x)
    {
        double u = 1 + x;
        if (u == 1) return x;
        if (double.IsPositiveInfinity(u)) return u;
        return Math.Log(u) * x / (u - 1);
    }

    public static double Expm1(double x)
    {
        if (Math.Abs(x) > 0.5) return Math.Exp(x) - 1;
        double u = Math.Exp(x);
        if (u == 1) return x;
        double um1 = u - 1;
        return um1 * x / Math.Log(u);
    }
}
