using Forecast.Core.Catalog;

namespace Forecast.Core.Tests.Catalog;

public class GreatCircleTests
{
    // Closed forms on a sphere of R = 6371 km: an arc of angle theta has length R theta.
    const double OneDegreeKm = 6371 * Math.PI / 180; // 111.1949 km
    const double QuarterCircleKm = 6371 * Math.PI / 2; // 10007.54 km

    [Theory]
    [InlineData(0, 0, 1, 0, OneDegreeKm)] // one degree of latitude
    [InlineData(45, 10, 46, 10, OneDegreeKm)] // a meridian arc is one degree anywhere
    [InlineData(0, 0, 0, 1, OneDegreeKm)] // one degree of longitude on the equator
    [InlineData(0, 179.5, 0, -179.5, OneDegreeKm)] // across the date line
    [InlineData(0, 0, 90, 0, QuarterCircleKm)] // equator to pole: quarter meridian
    [InlineData(0, 0, 0, 90, QuarterCircleKm)] // quarter of the equator
    [InlineData(0, 0, 0, 180, 2 * QuarterCircleKm)] // antipodes: half a great circle
    [InlineData(35, -118, 35, -118, 0)]
    public void DistanceKmMatchesClosedFormArcs(double lat1, double lon1, double lat2, double lon2, double km)
    {
        Assert.Equal(km, GreatCircle.DistanceKm(lat1, lon1, lat2, lon2), 1e-6);
    }

    [Fact]
    public void DistanceKmAlongALatitudeCircleIsShorterThanTheParallel()
    {
        // On latitude 60 the parallel arc of one degree is R cos(60) pi/180 = 55.597 km; the great circle is
        // slightly shorter: 2 R asin(cos 60 sin 0.5 deg) = 55.5972 - a few metres (closed form).
        var expected = 2 * 6371 * Math.Asin(Math.Cos(Math.PI / 3) * Math.Sin(Math.PI / 360));

        Assert.Equal(expected, GreatCircle.DistanceKm(60, 0, 60, 1), 1e-9);
    }

    [Fact]
    public void DestinationOneDegreeNorthOfTheOriginIsLatitudeOne()
    {
        var (lat, lon) = GreatCircle.Destination(0, 0, 0, OneDegreeKm);

        Assert.Equal(1.0, lat, 1e-9);
        Assert.Equal(0.0, lon, 1e-9);
    }

    [Fact]
    public void DestinationEastAcrossTheDateLineWrapsLongitude()
    {
        var (lat, lon) = GreatCircle.Destination(0, 179.5, 90, OneDegreeKm);

        Assert.Equal(0.0, lat, 1e-9);
        Assert.Equal(-179.5, lon, 1e-9);
    }

    [Theory]
    [InlineData(35.0, -118.0, 0)]
    [InlineData(35.0, -118.0, 73)]
    [InlineData(-41.3, 174.8, 210)]
    [InlineData(70.0, 20.0, 300)]
    public void DestinationLiesAtTheRequestedDistance(double lat, double lon, double bearingDeg)
    {
        var (lat2, lon2) = GreatCircle.Destination(lat, lon, bearingDeg, 150);

        Assert.Equal(150, GreatCircle.DistanceKm(lat, lon, lat2, lon2), 1e-6);
    }

    [Fact]
    public void DistanceKmRejectsALatitudeBeyondThePole()
    {
        Assert.Throws<ArgumentException>(() => GreatCircle.DistanceKm(91, 0, 0, 0));
        Assert.Throws<ArgumentException>(() => GreatCircle.DistanceKm(0, double.NaN, 0, 0));
    }
}
