namespace Forecast.Plots;

public enum PlotKind { MagnitudeTime, Cumulative, FrequencyMagnitude, Rate, Map, Table }

public static class PlotKinds
{
    public static readonly IReadOnlyList<PlotKind> All =
    [
        PlotKind.Table, PlotKind.MagnitudeTime, PlotKind.Cumulative, PlotKind.Map, PlotKind.FrequencyMagnitude,
        PlotKind.Rate,
    ];

    /// <summary>The name of a plot in URLs.</summary>
    public static string Slug(PlotKind kind) => kind switch
    {
        PlotKind.MagnitudeTime => "magnitude-time",
        PlotKind.Cumulative => "cumulative",
        PlotKind.FrequencyMagnitude => "frequency-magnitude",
        PlotKind.Rate => "rate",
        PlotKind.Map => "map",
        PlotKind.Table => "table",
        _ => throw new ArgumentOutOfRangeException(nameof(kind)),
    };

    public static bool TryParse(string slug, out PlotKind kind)
    {
        foreach (var k in All)
        {
            if (Slug(k) == slug)
            {
                kind = k;
                return true;
            }
        }
        kind = default;
        return false;
    }
}
