namespace Forecast.Core.Catalog;

/// <summary>Argument checks shared by the catalog statistics, with messages a caller can act on.</summary>
internal static class Guard
{
    public static void AllFinite(ReadOnlySpan<double> values, string paramName)
    {
        for (var i = 0; i < values.Length; i++)
        {
            if (!double.IsFinite(values[i]))
                throw new ArgumentException($"Value at index {i} is {values[i]}; every magnitude must be finite.",
                    paramName);
        }
    }

    public static void Finite(double value, string paramName)
    {
        if (!double.IsFinite(value))
            throw new ArgumentException($"Must be a finite number, got {value}.", paramName);
    }

    public static void Positive(double value, string paramName)
    {
        if (!(value > 0) || !double.IsFinite(value))
            throw new ArgumentException($"Must be a finite number above zero, got {value}.", paramName);
    }

    public static void NonNegative(double value, string paramName)
    {
        if (!(value >= 0) || !double.IsFinite(value))
            throw new ArgumentException($"Must be a finite number of at least zero, got {value}.", paramName);
    }

    public static void Probability(double value, string paramName)
    {
        if (!(value >= 0 && value <= 1))
            throw new ArgumentException($"Must be a probability between 0 and 1, got {value}.", paramName);
    }

    public static void Latitude(double value, string paramName)
    {
        if (!(value >= -90 && value <= 90))
            throw new ArgumentException($"Latitude must be between -90 and 90 degrees, got {value}.", paramName);
    }

    public static void Longitude(double value, string paramName)
    {
        if (!double.IsFinite(value))
            throw new ArgumentException($"Longitude must be a finite number of degrees, got {value}.", paramName);
    }
}
