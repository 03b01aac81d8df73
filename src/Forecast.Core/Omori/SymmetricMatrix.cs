namespace Forecast.Core.Omori;

/// <summary>Inversion of small symmetric positive-definite matrices by Cholesky factorisation.</summary>
internal static class SymmetricMatrix
{
    /// <summary>Inverts <paramref name="m"/>; false when it is not positive definite (or not finite).</summary>
    public static bool TryInvertPositiveDefinite(double[,] m, out double[,] inverse)
    {
        int n = m.GetLength(0);
        var l = new double[n, n];
        inverse = new double[n, n];
        for (int i = 0; i < n; i++)
        {
            for (int j = 0; j <= i; j++)
            {
                double sum = m[i, j];
                for (int k = 0; k < j; k++) sum -= l[i, k] * l[j, k];
                if (i == j)
                {
                    if (!(sum > 0) || !double.IsFinite(sum)) return false;
                    l[i, i] = Math.Sqrt(sum);
                }
                else
                {
                    l[i, j] = sum / l[j, j];
                }
            }
        }
        for (int column = 0; column < n; column++)
        {
            var y = new double[n];
            for (int i = 0; i < n; i++)
            {
                double sum = i == column ? 1 : 0;
                for (int k = 0; k < i; k++) sum -= l[i, k] * y[k];
                y[i] = sum / l[i, i];
            }
            for (int i = n - 1; i >= 0; i--)
            {
                double sum = y[i];
                for (int k = i + 1; k < n; k++) sum -= l[k, i] * inverse[k, column];
                inverse[i, column] = sum / l[i, i];
            }
        }
        return true;
    }
}
