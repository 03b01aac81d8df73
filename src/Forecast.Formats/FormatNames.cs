namespace Forecast.Formats;

/// <summary>Media types of the standard formats the service reads and writes.</summary>
public static class FormatNames
{
    public const string QuakeMl = "application/vnd.quakeml+xml";
    public const string FdsnText = "text/plain";
    public const string GeoJson = "application/geo+json";
    public const string Cap = "application/cap+xml";
}
