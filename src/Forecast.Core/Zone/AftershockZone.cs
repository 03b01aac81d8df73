using Forecast.Core.Catalog;

namespace Forecast.Core.Zone;

/// <summary>Rupture-length scaling of Wells &amp; Coppersmith (1994), BSSA 84, 974-1002.</summary>
public static class WellsCoppersmith1994
{
    /// <summary>Subsurface rupture length in km, all slip types: <c>log10(RLD) = -2.44 + 0.59 M</c>
    /// (Wells &amp; Coppersmith 1994, their table 2A, from memory).</summary>
    /// <remarks>The regression was fitted to moment magnitudes of roughly 4.8 to 8.1 (from memory); outside that
    /// range the value is an extrapolation.</remarks>
    /// <exception cref="ArgumentException">The magnitude is not finite.</exception>
    public static double SubsurfaceRuptureLengthKm(double magnitude)
    {
        Guard.Finite(magnitude, nameof(magnitude));
        return Math.Pow(10, -2.44 + 0.59 * magnitude);
    }
}

/// <summary>The region around a mainshock where events count as its aftershocks: a circle about the
/// epicentre.</summary>
/// <remarks>
/// The radius is <c>max(floorKm, multiple * RLD(M))</c> with RLD the Wells &amp; Coppersmith (1994) subsurface
/// rupture length. The defaults are a project choice, overridable by the caller:
/// <list type="bullet">
/// <item><description><see cref="DefaultMultiple"/> = 1 rupture length: the epicentre may sit at one end of a
/// unilateral rupture, so a radius of one full length covers the rupture wherever the epicentre lies, with room
/// beyond the far end when it is central.</description></item>
/// <item><description><see cref="DefaultFloorKm"/> = 10 km: small shocks have ruptures of a few km (M 5: about
/// 3 km) while epicentres of regional networks are uncertain by several km, so a smaller circle would lose
/// aftershocks to location error alone.</description></item>
/// </list>
/// </remarks>
public static class AftershockZone
{
    /// <summary>Radius in rupture lengths (project choice; see the class remarks).</summary>
    public const double DefaultMultiple = 1.0;

    /// <summary>Smallest radius in km (project choice; see the class remarks).</summary>
    public const double DefaultFloorKm = 10.0;

    /// <summary>Zone radius in km: <c>max(floorKm, multiple * 10^(-2.44 + 0.59 M))</c>.</summary>
    /// <exception cref="ArgumentException">A non-finite magnitude, a multiple not above zero, or a negative
    /// floor.</exception>
    public static double RadiusKm(
        double magnitude, double multiple = DefaultMultiple, double floorKm = DefaultFloorKm)
    {
        Guard.Positive(multiple, nameof(multiple));
        Guard.NonNegative(floorKm, nameof(floorKm));
        return Math.Max(floorKm, multiple * WellsCoppersmith1994.SubsurfaceRuptureLengthKm(magnitude));
    }

    /// <summary>True when (<paramref name="lat"/>, <paramref name="lon"/>) lies within
    /// <paramref name="radiusKm"/> (edge included) of the centre, by great-circle distance.</summary>
    /// <exception cref="ArgumentException">An invalid coordinate or a negative radius.</exception>
    public static bool Contains(double centreLat, double centreLon, double radiusKm, double lat, double lon)
    {
        Guard.NonNegative(radiusKm, nameof(radiusKm));
        return GreatCircle.DistanceKm(centreLat, centreLon, lat, lon) <= radiusKm;
    }

    /// <summary>The zone's boundary as a closed ring of <paramref name="vertices"/> points plus the first repeated
    /// at the end (as GeoJSON polygons require), clockwise from north.</summary>
    /// <exception cref="ArgumentException">An invalid centre, a negative radius, or fewer than 3 vertices.</exception>
    public static IReadOnlyList<(double Latitude, double Longitude)> Boundary(
        double centreLat, double centreLon, double radiusKm, int vertices = 72)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(vertices, 3);
        Guard.NonNegative(radiusKm, nameof(radiusKm));
        var ring = new List<(double, double)>(vertices + 1);
        for (var k = 0; k < vertices; k++)
            ring.Add(GreatCircle.Destination(centreLat, centreLon, 360.0 * k / vertices, radiusKm));
        ring.Add(ring[0]);
        return ring;
    }
}
