namespace Forecast.Core;

/// <summary>One located earthquake as the statistics see it: plain values, UTC time, no storage concerns.</summary>
/// <param name="Id">Identifier unique within the catalog being analysed.</param>
/// <param name="TimeUtc">Origin time, <see cref="DateTimeKind.Utc"/>.</param>
/// <param name="Latitude">Degrees north, -90 to 90.</param>
/// <param name="Longitude">Degrees east, -180 to 180.</param>
/// <param name="DepthKm">Hypocentral depth in kilometres.</param>
/// <param name="Magnitude">Magnitude (any one type, consistently).</param>
public sealed record CatalogEvent(
    string Id, DateTime TimeUtc, double Latitude, double Longitude, double DepthKm, double Magnitude);
