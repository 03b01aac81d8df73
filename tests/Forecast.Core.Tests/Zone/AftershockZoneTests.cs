using Forecast.Core.Catalog;
using Forecast.Core.Zone;

namespace Forecast.Core.Tests.Zone;

public class AftershockZoneTests
{
    [Theory]
    // Wells & Coppersmith (1994), log10(RLD) = -2.44 + 0.59 M; values computed from that formula.
    [InlineData(7.0, 48.97788)] // 10^1.69
    [InlineData(6.0, 12.58925)] // 10^1.10
    [InlineData(5.0, 3.235937)] // 10^0.51
    public void SubsurfaceRuptureLengthFollowsWellsCoppersmith(double magnitude, double lengthKm)
    {
        Assert.Equal(lengthKm, WellsCoppersmith1994.SubsurfaceRuptureLengthKm(magnitude), 1e-5);
    }

    [Theory]
    [InlineData(7.0, 1.0, 10.0, 48.97788)] // one rupture length (default)
    [InlineData(7.0, 2.0, 10.0, 97.95576)] // two lengths when asked
    [InlineData(5.0, 1.0, 10.0, 10.0)] // 3.2 km is below the 10 km floor (default)
    [InlineData(5.0, 1.0, 2.0, 3.235937)] // a lower floor lets the length through
    public void RadiusKmIsTheLargerOfTheFloorAndTheScaledLength(
        double magnitude, double multiple, double floorKm, double expectedKm)
    {
        Assert.Equal(expectedKm, AftershockZone.RadiusKm(magnitude, multiple, floorKm), 1e-5);
    }

    [Fact]
    public void DefaultsAreOneRuptureLengthAndATenKilometreFloor()
    {
        Assert.Equal(AftershockZone.RadiusKm(7.0, 1.0, 10.0), AftershockZone.RadiusKm(7.0));
        Assert.Equal(10.0, AftershockZone.RadiusKm(4.0));
    }

    [Theory]
    // Half a degree of latitude is 6371 pi / 360 = 55.597 km (closed form).
    [InlineData(60.0, true)]
    [InlineData(55.6, true)]
    [InlineData(55.59, false)]
    [InlineData(50.0, false)]
    public void ContainsComparesTheGreatCircleDistanceWithTheRadius(double radiusKm, bool inside)
    {
        Assert.Equal(inside, AftershockZone.Contains(35.0, -118.0, radiusKm, 35.5, -118.0));
    }

    [Fact]
    public void BoundaryIsAClosedRingAtTheRadius()
    {
        var ring = AftershockZone.Boundary(35.0, -118.0, 49.0, vertices: 36);

        Assert.Equal(37, ring.Count);
        Assert.Equal(ring[0], ring[^1]);
        Assert.All(ring, p => Assert.Equal(49.0, GreatCircle.DistanceKm(35.0, -118.0, p.Latitude, p.Longitude), 1e-6));
    }

    [Fact]
    public void BadArgumentsAreRejected()
    {
        Assert.Throws<ArgumentException>(() => AftershockZone.RadiusKm(double.NaN));
        Assert.Throws<ArgumentException>(() => AftershockZone.RadiusKm(6.0, multiple: 0));
        Assert.Throws<ArgumentException>(() => AftershockZone.Contains(0, 0, -1, 0, 0));
    }
}
