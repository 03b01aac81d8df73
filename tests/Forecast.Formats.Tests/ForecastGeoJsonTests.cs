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

    [Theory]
    [InlineData(179.9)]
    [InlineData(-179.8)]
    public void AZoneAcrossTheAntimeridianIsCutIntoTwoValidCounterClockwiseParts(double centreLon)
    {
        // RFC 7946, 3.1.9: a geometry crossing the antimeridian SHOULD be cut in two so that neither part
        // crosses it; longitudes stay within [-180, 180] (3.1.1); each exterior ring is counter-clockwise (3.1.6).
        using var buffer = new MemoryStream();
        ForecastGeoJson.WriteFeatureCollection(buffer, [Sample with { MainshockLongitude = centreLon, ZoneRadiusKm = 60 }]);
        var options = new JsonSerializerOptions { Converters = { new GeoJsonConverterFactory() } };
        var features = JsonSerializer.Deserialize<FeatureCollection>(Encoding.UTF8.GetString(buffer.ToArray()), options)!;
        var zone = Assert.IsType<MultiPolygon>(features[1].Geometry);
        Assert.Equal(2, zone.NumGeometries);
        var sides = new List<double>();
        foreach (var part in zone.Geometries.Cast<Polygon>())
        {
            Assert.True(part.IsValid);
            Assert.True(Orientation.IsCCW(part.Shell.CoordinateSequence));
            Assert.All(part.Coordinates, c => Assert.InRange(c.X, -180, 180));
            // Each part touches the antimeridian on its own side and lies entirely on that side.
            var edge = part.Coordinates.Select(c => c.X).OrderBy(x => Math.Abs(Math.Abs(x) - 180)).First();
            Assert.Equal(180, Math.Abs(edge), 9);
            Assert.All(part.Coordinates, c => Assert.True(Math.Sign(c.X) == Math.Sign(edge) || c.X == 0));
            sides.Add(Math.Sign(edge));
        }
        Assert.Equal([-1.0, 1.0], sides.Order());

        // The two parts together cover what the uncut ring covers (planar areas in degrees², unwrapped).
        var ring = ForecastGeoJson.ZoneRing(Sample.MainshockLatitude, centreLon, 60)
            .Select(p => new Coordinate(p.Longitude < 0 && centreLon > 0 ? p.Longitude + 360
                : p.Longitude > 0 && centreLon < 0 ? p.Longitude - 360 : p.Longitude, p.Latitude)).ToArray();
        var whole = new GeometryFactory().CreatePolygon(ring);
        Assert.Equal(whole.Area, zone.Area, 6);
    }

    [Fact]
    public void AZoneAwayFromTheAntimeridianIsOnePolygon() =>
        Assert.Single(ForecastGeoJson.ZoneParts(12.5, 179.0, 25));

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
