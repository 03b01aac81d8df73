namespace Forecast.Core.Catalog;

/// <summary>Distances and positions on a spherical Earth of radius <see cref="EarthRadiusKm"/>.</summary>
/// <remarks>A sphere is adequate at aftershock-zone scales: the ellipsoid changes distances by under 0.5 %
/// (common practice).</remarks>
public static class GreatCircle
{
    /// <summary>Mean Earth radius in kilometres (IUGG mean radius, 6371.0 km, rounded).</summary>
    public const double EarthRadiusKm = 6371.0;

    /// <summary>Great-circle distance in km between two points given in degrees, by the haversine formula
    /// (well conditioned for short distances; textbook spherical trigonometry).</summary>
    /// <exception cref="ArgumentException">A latitude is outside -90..90 or a coordinate is not finite.</exception>
    public static double DistanceKm(double lat1, double lon1, double lat2, double lon2)
    {
        Guard.Latitude(lat1, nameof(lat1));
        Guard.Longitude(lon1, nameof(lon1));
        Guard.Latitude(lat2, nameof(lat2));
        Guard.Longitude(lon2, nameof(lon2));

        var phi1 = ToRadians(lat1);
        var phi2 = ToRadians(lat2);
        var sinHalfDPhi = Math.Sin((phi2 - phi1) / 2);
        var sinHalfDLambda = Math.Sin(ToRadians(lon2 - lon1) / 2);
        var h = sinHalfDPhi * sinHalfDPhi + Math.Cos(phi1) * Math.Cos(phi2) * sinHalfDLambda * sinHalfDLambda;
        // Clamp: rounding can push h a hair above 1 for antipodal points.
        return 2 * EarthRadiusKm * Math.Asin(Math.Sqrt(Math.Min(1.0, h)));
    }

    /// <summary>The point reached from (<paramref name="lat"/>, <paramref name="lon"/>) by travelling
    /// <paramref name="distanceKm"/> along a great circle starting at <paramref name="bearingDeg"/>
    /// (clockwise from north); textbook spherical trigonometry ("direct problem" on the sphere).</summary>
    /// <returns>Latitude in -90..90 and longitude normalised to -180..180 (degrees).</returns>
    /// <exception cref="ArgumentException">A coordinate or the bearing is not finite, a latitude is out of range,
    /// or the distance is negative.</exception>
    public static (double Latitude, double Longitude) Destination(
        double lat, double lon, double bearingDeg, double distanceKm)
    {
        Guard.Latitude(lat, nameof(lat));
        Guard.Longitude(lon, nameof(lon));
        Guard.Finite(bearingDeg, nameof(bearingDeg));
        Guard.NonNegative(distanceKm, nameof(distanceKm));

        var phi1 = ToRadians(lat);
        var lambda1 = ToRadians(lon);
        var theta = ToRadians(bearingDeg);
        var delta = distanceKm / EarthRadiusKm;

        var sinPhi2 = Math.Sin(phi1) * Math.Cos(delta) + Math.Cos(phi1) * Math.Sin(delta) * Math.Cos(theta);
        var phi2 = Math.Asin(Math.Clamp(sinPhi2, -1.0, 1.0));
        var lambda2 = lambda1 + Math.Atan2(
            Math.Sin(theta) * Math.Sin(delta) * Math.Cos(phi1),
            Math.Cos(delta) - Math.Sin(phi1) * sinPhi2);
        return (ToDegrees(phi2), NormaliseLongitude(ToDegrees(lambda2)));
    }

    /// <summary>Longitude brought into -180..180 degrees.</summary>
    public static double NormaliseLongitude(double lonDeg)
    {
        var x = (lonDeg + 180.0) % 360.0;
        if (x < 0) x += 360.0;
        return x - 180.0;
    }

    static double ToRadians(double degrees) => degrees * Math.PI / 180.0;

    static double ToDegrees(double radians) => radians * 180.0 / Math.PI;
}
