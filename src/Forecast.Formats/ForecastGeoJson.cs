using System.Text.Json;
using Forecast.Core.Zone;

namespace Forecast.Formats;

/// <summary>What the GeoJSON feed says of one released forecast: plain values, supplied by the host.</summary>
/// <param name="ExpectedLow">Lower end of the 95 % range of the number of shocks in the window.</param>
/// <param name="SequenceId">The trailing members are optional: written only when given (the notice always).</param>
/// <param name="Notice">The drill notice; written as null for a real forecast.</param>
/// <param name="ExpectedNumber">The mean number of shocks expected in the window.</param>
/// <param name="CapUrl">Where the CAP 1.2 alert of the forecast is served.</param>
public sealed record ForecastFeature(
    string ForecastId, string MainshockId, double MainshockLatitude, double MainshockLongitude,
    double MainshockMagnitude, DateTime MainshockTimeUtc, double ZoneRadiusKm, DateTime IssuedUtc,
    DateTime WindowStartUtc, DateTime WindowEndUtc, double MinMagnitude, double Probability, int ExpectedLow,
    int ExpectedHigh, string State, bool Exercise, string? AdvisoryUrl, long? SequenceId = null, int? Number = null,
    string? Title = null, string? Notice = null, double? ExpectedNumber = null, string? CapUrl = null);

/// <summary>RFC 7946 GeoJSON of released forecasts: per forecast a Point feature (the mainshock) and a Polygon
/// feature (the aftershock zone), with the same summary properties and <c>role</c> telling them apart.</summary>
/// <remarks>Positions are [longitude, latitude] (RFC 7946, 3.1.1) rounded to 6 decimals, about 0.1 m
/// (RFC 7946, 11.2). The zone ring is closed (3.1.6: first and last positions equal) and counter-clockwise
/// (3.1.6: exterior rings follow the right-hand rule): <see cref="AftershockZone.Boundary"/> runs clockwise from
/// north, so it is reversed. A zone crossing the antimeridian is cut there into a MultiPolygon of two parts (3.1.9),
/// one on each side; a zone containing a pole is not handled (zones are at most a few hundred kilometres).</remarks>
public static class ForecastGeoJson
{
    public const int DefaultVertices = 72;

    /// <summary>The zone's exterior ring as closed, counter-clockwise (longitude, latitude) positions.</summary>
    public static IReadOnlyList<(double Longitude, double Latitude)> ZoneRing(
        double centreLat, double centreLon, double radiusKm, int vertices = DefaultVertices)
    {
        var clockwise = AftershockZone.Boundary(centreLat, centreLon, radiusKm, vertices);
        var ring = new List<(double, double)>(clockwise.Count);
        for (var i = clockwise.Count - 1; i >= 0; i--)
            ring.Add((Math.Round(clockwise[i].Longitude, 6), Math.Round(clockwise[i].Latitude, 6)));
        return ring;
    }

    /// <summary>The zone as GeoJSON polygons' exterior rings: one ring, or two when the zone crosses the
    /// antimeridian (RFC 7946, 3.1.9: cut it there, each part on its own side, longitudes within ±180).</summary>
    /// <remarks>The ring's longitudes are first made continuous (each within 180° of the one before), then the
    /// ring is clipped against the crossed meridian on each side (Sutherland &amp; Hodgman 1974, exact for the
    /// convex ring of a small circle), which keeps the counter-clockwise order; the eastern or western part is
    /// shifted back by 360°. Cut points are interpolated linearly in longitude and latitude, as 3.1.9's example
    /// does.</remarks>
    public static IReadOnlyList<IReadOnlyList<(double Longitude, double Latitude)>> ZoneParts(
        double centreLat, double centreLon, double radiusKm, int vertices = DefaultVertices)
    {
        var ring = ZoneRing(centreLat, centreLon, radiusKm, vertices);
        var open = new List<(double Lon, double Lat)>(ring.Count - 1);
        for (var i = 0; i < ring.Count - 1; i++)
        {
            var lon = ring[i].Longitude;
            if (open.Count > 0)
            {
                while (lon - open[^1].Lon > 180) lon -= 360;
                while (open[^1].Lon - lon > 180) lon += 360;
            }
            open.Add((lon, ring[i].Latitude));
        }
        var max = open.Max(v => v.Lon);
        var min = open.Min(v => v.Lon);
        if (max <= 180 && min >= -180) return [ring];
        var meridian = max > 180 ? 180.0 : -180.0;
        var west = Clip(open, meridian, keepWest: true);
        var east = Clip(open, meridian, keepWest: false);
        var shift = meridian > 0 ? (West: 0.0, East: -360.0) : (West: 360.0, East: 0.0);
        return [Close(west, shift.West), Close(east, shift.East)];
    }

    static List<(double Lon, double Lat)> Clip(List<(double Lon, double Lat)> ring, double meridian, bool keepWest)
    {
        bool Inside((double Lon, double Lat) v) => keepWest ? v.Lon <= meridian : v.Lon >= meridian;
        var result = new List<(double, double)>();
        for (var i = 0; i < ring.Count; i++)
        {
            var current = ring[i];
            var previous = ring[(i + ring.Count - 1) % ring.Count];
            if (Inside(current) != Inside(previous))
            {
                var t = (meridian - previous.Lon) / (current.Lon - previous.Lon);
                result.Add((meridian, previous.Lat + t * (current.Lat - previous.Lat)));
            }
            if (Inside(current)) result.Add(current);
        }
        return result;
    }

    static IReadOnlyList<(double Longitude, double Latitude)> Close(List<(double Lon, double Lat)> part, double shift)
    {
        var ring = part.Select(v => (Math.Round(v.Lon + shift, 6), Math.Round(v.Lat, 6))).ToList();
        ring.Add(ring[0]);
        return ring;
    }

    public static void WriteFeatureCollection(Stream stream, IEnumerable<ForecastFeature> forecasts,
        int vertices = DefaultVertices)
    {
        using var json = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = false });
        json.WriteStartObject();
        json.WriteString("type", "FeatureCollection");
        json.WriteStartArray("features");
        foreach (var f in forecasts)
        {
            Feature(json, f, "mainshock", () =>
            {
                json.WriteString("type", "Point");
                json.WriteStartArray("coordinates");
                json.WriteNumberValue(Math.Round(f.MainshockLongitude, 6));
                json.WriteNumberValue(Math.Round(f.MainshockLatitude, 6));
                json.WriteEndArray();
            });
            Feature(json, f, "zone", () =>
            {
                var parts = ZoneParts(f.MainshockLatitude, f.MainshockLongitude, f.ZoneRadiusKm, vertices);
                json.WriteString("type", parts.Count == 1 ? "Polygon" : "MultiPolygon");
                json.WriteStartArray("coordinates");
                foreach (var part in parts)
                {
                    if (parts.Count > 1) json.WriteStartArray();
                    json.WriteStartArray();
                    foreach (var (lon, lat) in part)
                    {
                        json.WriteStartArray();
                        json.WriteNumberValue(lon);
                        json.WriteNumberValue(lat);
                        json.WriteEndArray();
                    }
                    json.WriteEndArray();
                    if (parts.Count > 1) json.WriteEndArray();
                }
                json.WriteEndArray();
            });
        }
        json.WriteEndArray();
        json.WriteEndObject();
    }

    static void Feature(Utf8JsonWriter json, ForecastFeature f, string role, Action geometry)
    {
        json.WriteStartObject();
        json.WriteString("type", "Feature");
        json.WriteString("id", $"{f.ForecastId}-{role}");
        json.WriteStartObject("geometry");
        geometry();
        json.WriteEndObject();
        json.WriteStartObject("properties");
        json.WriteString("role", role);
        json.WriteString("forecastId", f.ForecastId);
        if (f.SequenceId is { } sequenceId) json.WriteNumber("sequenceId", sequenceId);
        if (f.Number is { } number) json.WriteNumber("number", number);
        if (f.Title is not null) json.WriteString("title", f.Title);
        json.WriteString("mainshockId", f.MainshockId);
        json.WriteNumber("mainshockMagnitude", f.MainshockMagnitude);
        json.WriteString("mainshockTime", IsoTime.Write(f.MainshockTimeUtc));
        json.WriteNumber("zoneRadiusKm", f.ZoneRadiusKm);
        json.WriteString("issued", IsoTime.Write(f.IssuedUtc));
        json.WriteString("windowStart", IsoTime.Write(f.WindowStartUtc));
        json.WriteString("windowEnd", IsoTime.Write(f.WindowEndUtc));
        json.WriteNumber("minMagnitude", f.MinMagnitude);
        json.WriteNumber("probability", f.Probability);
        if (f.ExpectedNumber is { } expected) json.WriteNumber("expectedNumber", expected);
        json.WriteNumber("expectedLow", f.ExpectedLow);
        json.WriteNumber("expectedHigh", f.ExpectedHigh);
        json.WriteString("state", f.State);
        json.WriteBoolean("exercise", f.Exercise);
        if (f.Notice is null) json.WriteNull("notice");
        else json.WriteString("notice", f.Notice);
        if (f.AdvisoryUrl is null) json.WriteNull("advisory");
        else json.WriteString("advisory", f.AdvisoryUrl);
        if (f.CapUrl is not null) json.WriteString("cap", f.CapUrl);
        json.WriteEndObject();
        json.WriteEndObject();
    }
}
