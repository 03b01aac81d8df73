using Forecast.Core.Catalog;

namespace Forecast.Core.Background;

/// <summary>Which events of a catalog are independent (mainshocks and isolated events) and which belong to a
/// cluster, by a declustering method.</summary>
/// <param name="Catalog">The catalog as given, in the given order.</param>
/// <param name="MainshockIndex">For each event (same index as <paramref name="Catalog"/>), the index of the
/// mainshock of its cluster; an independent event is its own mainshock.</param>
/// <param name="Independent">Independent events, in catalog order.</param>
/// <param name="Clustered">Clustered events (aftershocks and foreshocks), in catalog order.</param>
/// <param name="ForeshockWindowFraction">Fraction of the time window also applied before each mainshock.</param>
public sealed record DeclusteringResult(
    IReadOnlyList<CatalogEvent> Catalog,
    IReadOnlyList<int> MainshockIndex,
    IReadOnlyList<CatalogEvent> Independent,
    IReadOnlyList<CatalogEvent> Clustered,
    double ForeshockWindowFraction)
{
    /// <summary>True when the event at <paramref name="index"/> is a mainshock or an isolated event.</summary>
    public bool IsIndependent(int index) => MainshockIndex[index] == index;
}

/// <summary>Window declustering of Gardner &amp; Knopoff (1974), BSSA 64, 1363-1367, in the form commonly
/// tabulated (coefficients from memory, as in METHODS.md):
/// <c>L = 10^(0.1238 M + 0.983)</c> km; <c>T = 10^(0.032 M + 2.7389)</c> days for M &gt;= 6.5, else
/// <c>10^(0.5409 M - 0.547)</c> days.</summary>
/// <remarks>
/// <para>Largest first: events are taken in decreasing magnitude (ties: earlier first). An event not yet claimed
/// by a cluster becomes a mainshock and claims every unclaimed event within its distance window and within
/// <c>T</c> days after it, or <c>fraction * T</c> days before it (foreshocks). Claimed events open no window of
/// their own. Unclaimed events are always no larger than the current mainshock, so larger shocks are never
/// swallowed by smaller ones.</para>
/// <para>Distances are epicentral great-circle distances (depth ignored; common practice). Windows include their
/// edges. The default foreshock fraction of 1 (a window symmetric in time) is a project choice following common
/// implementations (e.g. OpenQuake's <c>fs_time_prop</c>, from memory); 0 removes aftershocks only.</para>
/// </remarks>
public static class GardnerKnopoff
{
    /// <summary>Distance window in km for a mainshock of <paramref name="magnitude"/>:
    /// <c>10^(0.1238 M + 0.983)</c>.</summary>
    public static double DistanceWindowKm(double magnitude)
    {
        Guard.Finite(magnitude, nameof(magnitude));
        return Math.Pow(10, 0.1238 * magnitude + 0.983);
    }

    /// <summary>Time window in days for a mainshock of <paramref name="magnitude"/>:
    /// <c>10^(0.032 M + 2.7389)</c> for M &gt;= 6.5, else <c>10^(0.5409 M - 0.547)</c>.</summary>
    public static double TimeWindowDays(double magnitude)
    {
        Guard.Finite(magnitude, nameof(magnitude));
        return magnitude >= 6.5
            ? Math.Pow(10, 0.032 * magnitude + 2.7389)
            : Math.Pow(10, 0.5409 * magnitude - 0.547);
    }

    /// <summary>Splits <paramref name="catalog"/> (any order) into independent and clustered events.</summary>
    /// <param name="catalog">Events with finite magnitudes and valid coordinates.</param>
    /// <param name="foreshockWindowFraction">Share of the time window applied before a mainshock, 0 to 1.</param>
    /// <exception cref="ArgumentException">A null event, a non-finite magnitude, an invalid coordinate, or a
    /// fraction outside 0..1.</exception>
    public static DeclusteringResult Decluster(
        IReadOnlyList<CatalogEvent> catalog, double foreshockWindowFraction = 1.0)
    {
        ArgumentNullException.ThrowIfNull(catalog);
        Guard.Probability(foreshockWindowFraction, nameof(foreshockWindowFraction));
        CheckEvents(catalog);

        var byTime = Enumerable.Range(0, catalog.Count)
            .OrderBy(i => catalog[i].TimeUtc.Ticks).ThenBy(i => i).ToArray();
        var sortedTicks = byTime.Select(i => catalog[i].TimeUtc.Ticks).ToArray();
        var byMagnitudeDescending = Enumerable.Range(0, catalog.Count)
            .OrderByDescending(i => catalog[i].Magnitude).ThenBy(i => catalog[i].TimeUtc.Ticks).ThenBy(i => i);

        var mainshockOf = new int[catalog.Count];
        Array.Fill(mainshockOf, -1);
        foreach (var i in byMagnitudeDescending)
        {
            if (mainshockOf[i] >= 0) continue;
            mainshockOf[i] = i;
            ClaimWindow(catalog, i, foreshockWindowFraction, byTime, sortedTicks, mainshockOf);
        }
        return Result(catalog, mainshockOf, foreshockWindowFraction);
    }

    static void ClaimWindow(IReadOnlyList<CatalogEvent> catalog, int main, double foreshockFraction,
        int[] byTime, long[] sortedTicks, int[] mainshockOf)
    {
        var shock = catalog[main];
        var windowTicks = TimeWindowDays(shock.Magnitude) * TimeSpan.TicksPerDay;
        var distanceKm = DistanceWindowKm(shock.Magnitude);
        var fromTicks = SaturatingTicks(shock.TimeUtc.Ticks - foreshockFraction * windowTicks);
        var toTicks = SaturatingTicks(shock.TimeUtc.Ticks + windowTicks);

        for (var k = LowerBound(sortedTicks, fromTicks); k < byTime.Length && sortedTicks[k] <= toTicks; k++)
        {
            var j = byTime[k];
            if (mainshockOf[j] >= 0) continue;
            var e = catalog[j];
            if (GreatCircle.DistanceKm(shock.Latitude, shock.Longitude, e.Latitude, e.Longitude) <= distanceKm)
                mainshockOf[j] = main;
        }
    }

    static long SaturatingTicks(double ticks) =>
        (long)Math.Clamp(ticks, DateTime.MinValue.Ticks, DateTime.MaxValue.Ticks);

    // First position whose value is >= target.
    static int LowerBound(long[] sorted, long target)
    {
        int lo = 0, hi = sorted.Length;
        while (lo < hi)
        {
            var mid = lo + (hi - lo) / 2;
            if (sorted[mid] < target) lo = mid + 1;
            else hi = mid;
        }
        return lo;
    }

    static DeclusteringResult Result(IReadOnlyList<CatalogEvent> catalog, int[] mainshockOf, double fraction)
    {
        var independent = new List<CatalogEvent>();
        var clustered = new List<CatalogEvent>();
        for (var i = 0; i < catalog.Count; i++) (mainshockOf[i] == i ? independent : clustered).Add(catalog[i]);
        return new(catalog, mainshockOf, independent, clustered, fraction);
    }

    static void CheckEvents(IReadOnlyList<CatalogEvent> catalog)
    {
        for (var i = 0; i < catalog.Count; i++)
        {
            var e = catalog[i] ?? throw new ArgumentException($"Event at index {i} is null.", nameof(catalog));
            if (!double.IsFinite(e.Magnitude))
                throw new ArgumentException($"Event {e.Id} has magnitude {e.Magnitude}; it must be finite.",
                    nameof(catalog));
            if (!(e.Latitude >= -90 && e.Latitude <= 90) || !double.IsFinite(e.Longitude))
                throw new ArgumentException(
                    $"Event {e.Id} has invalid coordinates ({e.Latitude}, {e.Longitude}).", nameof(catalog));
        }
    }
}
