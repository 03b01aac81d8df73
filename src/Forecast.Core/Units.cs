namespace Forecast.Core;

/// <summary>Time conversions shared by the statistics.</summary>
public static class Units
{
    /// <summary>Elapsed time from <paramref name="originUtc"/> to <paramref name="timeUtc"/> in days.</summary>
    public static double DaysBetween(DateTime originUtc, DateTime timeUtc) => (timeUtc - originUtc).TotalDays;
}
