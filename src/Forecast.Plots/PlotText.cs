using System.Globalization;

namespace Forecast.Plots;

/// <summary>Titles and number formats shared by the plots.</summary>
internal static class PlotText
{
    /// <summary>The same marker the advisory carries (AdvisoryBuilder.ExerciseMarker), so a plot cut out of the
    /// page still says it is a drill.</summary>
    public const string ExerciseSubtitle = "EXERCISE EXERCISE EXERCISE: a drill, not a real forecast";

    public static string Title(PlotInput input, string what) =>
        (input.Exercise ? "EXERCISE: " : "") + what + " (forecast "
        + input.ForecastNumber.ToString(CultureInfo.InvariantCulture) + ")";

    public static string N(double x, string format = "0.##") => x.ToString(format, CultureInfo.InvariantCulture);

    public static string Utc(DateTime t) => t.ToString("yyyy-MM-dd HH:mm 'UTC'", CultureInfo.InvariantCulture);

    /// <summary>A window as people say it: "next 7 days" from the issue time.</summary>
    public static string Window(double t1Days, double t2Days)
    {
        var d = t2Days - t1Days;
        return d switch
        {
            _ when Math.Abs(d - 1) < 1e-6 => "next day",
            _ when Math.Abs(d - 7) < 1e-6 => "next week",
            _ when Math.Abs(d - 30) < 1e-6 => "next 30 days",
            _ when Math.Abs(d - 365) < 1e-6 => "next year",
            _ => "next " + N(d, "0.#") + " days",
        };
    }

    /// <summary>The forecast in one line, for subtitles: mainshock and issue.</summary>
    public static string Context(PlotInput input) =>
        $"{input.SequenceTitle}: M {N(input.MainshockMagnitude, "0.0")} on {Utc(input.MainshockTimeUtc)}; " +
        $"issued {Utc(input.IssueTimeUtc)} (day {N(input.IssueDays, "0.##")})";
}
