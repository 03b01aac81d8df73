using System.Text;
using System.Text.Json;
using NetTopologySuite.Algorithm;
using NetTopologySuite.Features;
using NetTopologySuite.Geometries;
using NetTopologySuite.IO.Converters;

namespace Forecast.Formats.Tests;

public class ForecastGeoJsonTests
{
    static readonly ForecastFeature Sample = new("f-1", "zz-1", 12.5, -30.25, 6.1,
        new DateTime(2026, 1, 10, 3, 0, 0, DateTimeKind.Utc), 25, new DateTime(2026, 1, 10, 4, 0, 0, DateTimeKind.Utc),
        new DateTime(2026, 1, 10, 4, 0, 0, DateTimeKind.Utc), new DateTime(2026, 1, 17, 4, 0, 0, DateTimeKind.Utc),
        5.0, 0.12, 0, 2, "released", true, "https://example.invalid/advisories/f-1");

    static (string Json, FeatureCollection Features) Write()
    {
        using var buffer = new MemoryStream();
        ForecastGeoJson.WriteFeatureCollection(buffer, [Sample]);
        var json = Encoding.UTF8.GetString(buffer.ToArray());
        var options = new JsonSerializerOptions { Converters = { new GeoJsonConverterFactory() } };
        return (json, JsonSerializer.Deserialize<FeatureCollection>(json, options)!);
    }

    [Fact]
    public void AGeneralPurposeReaderReadsAPointAndAValidPolygon()
    {
        var (_, features) = Write();
        Assert.Equal(2, features.Count);
        var point = Assert.IsType<Point>(features[0].Geometry);
        // RFC 7946, 3.1.1: positions are [longitude, latitude].
        Assert.Equal(-30.25, point.X);
        Assert.Equal(12.5, point.Y);
        var polygon = Assert.IsType<Polygon>(features[1].Geometry);
        Assert.True(polygon.IsValid);
        Assert.Equal(0, polygon.NumInteriorRings);
        Assert.True(polygon.Contains(point));
        Assert.Equal("released", features[1].Attributes["state"]);
        Assert.Equal(true, features[1].Attributes["exercise"]);
    }

    [Fact]
    public void TheExteriorRingIsClosedAndCounterClockwise()
    {
        // RFC 7946, 3.1.6: a linear ring is closed (first = last) with 4 or more positions; exterior rings are
        // counter-clockwise (the right-hand rule).
        var (_, features) = Write();
        var shell = ((Polygon)features[1].Geometry).Shell;
        Assert.True(shell.IsClosed);
        Assert.Equal(ForecastGeoJson.DefaultVertices + 1, shell.NumPoints);
        Assert.True(Orientation.IsCCW(shell.CoordinateSequence));
    }

    [Fact]
    public void TheZoneRingLiesAtTheRadiusInLongitudeLatitudeOrder()
    {
        var ring = ForecastGeoJson.ZoneRing(12.5, -30.25, 25);
        foreach (var (lon, lat) in ring)
        {
            var d = Forecast.Core.Catalog.GreatCircle.DistanceKm(12.5, -30.25, lat, lon);
            Assert.Equal(25, d, 0.01);
        }
    }

    [Fact]
    public void TheDocumentIsAFeatureCollectionWithoutACrsMember()
    {
        // RFC 7946, 4: WGS 84 only; the "crs" member of the 2008 format is gone. 3.3: "type": "FeatureCollection".
        var (json, _) = Write();
        using var doc = JsonDocument.Parse(json);
        Assert.Equal("FeatureCollection", doc.RootElement.GetProperty("type").GetString());
        Assert.False(doc.RootElement.TryGetProperty("crs", out _));
        Assert.Equal("f-1-zone", doc.RootElement.GetProperty("features")[1].GetProperty("id").GetString());
    }
}
