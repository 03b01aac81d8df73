using Forecast.Core.Background;

namespace Forecast.Core.Tests.Background;

public class GardnerKnopoffTests
{
    static readonly DateTime T0 = new(2020, 1, 1, 0, 0, 0, DateTimeKind.Utc);

    static CatalogEvent Event(string id, double days, double lat, double lon, double magnitude) =>
        new(id, T0.AddDays(days), lat, lon, 10, magnitude);

    [Theory]
    // Gardner & Knopoff (1974) windows as tabulated in METHODS.md; values computed from those formulas.
    [InlineData(5.0, 39.99447, 143.7143)] // L = 10^1.602, T = 10^(2.7045 - 0.547)
    [InlineData(6.0, 53.18633, 499.3442)]
    [InlineData(7.0, 70.72940, 918.1212)] // M >= 6.5 branch: T = 10^(0.224 + 2.7389)
    [InlineData(6.5, 61.33382, 884.9118)] // the upper branch starts at 6.5 ...
    [InlineData(6.4999, 61.33207, 930.6704)] // ... and the tabulated form drops by 46 days there (as published)
    public void WindowsFollowTheTabulatedFormulas(double magnitude, double distanceKm, double timeDays)
    {
        Assert.Equal(distanceKm, GardnerKnopoff.DistanceWindowKm(magnitude), 1e-4);
        Assert.Equal(timeDays, GardnerKnopoff.TimeWindowDays(magnitude), 1e-3);
    }

    // A M 6 mainshock (windows 53.2 km, 499 days) at (35, -118) with a foreshock, three aftershocks,
    // and three events outside its windows.
    static List<CatalogEvent> ConstructedCatalog() =>
    [
        Event("aftershock-far-in-window", 200, 35.4, -118.0, 3.5), // 44.5 km, 200 d: inside
        Event("main", 0, 35.0, -118.0, 6.0),
        Event("aftershock-1", 1, 35.05, -118.0, 4.2),
        Event("foreshock", -1, 35.02, -118.02, 4.5),
        Event("isolated-distant", 5, 40.0, -118.0, 4.0), // 556 km away
        Event("isolated-later", 600, 35.0, -118.0, 3.0), // 600 d, after the 499-day window
        Event("aftershock-2", 10, 34.9, -118.1, 3.8),
        Event("isolated-just-outside", 30, 35.5, -118.0, 3.2), // 55.6 km > 53.2 km
    ];

    [Fact]
    public void DeclusterRemovesTheClusterAndKeepsIsolatedEvents()
    {
        var result = GardnerKnopoff.Decluster(ConstructedCatalog());

        Assert.Equal(["isolated-distant", "isolated-just-outside", "isolated-later", "main"],
            result.Independent.Select(e => e.Id).Order());
        Assert.Equal(["aftershock-1", "aftershock-2", "aftershock-far-in-window", "foreshock"],
            result.Clustered.Select(e => e.Id).Order());
    }

    [Fact]
    public void ClusteredEventsPointToTheirMainshock()
    {
        var catalog = ConstructedCatalog();
        var result = GardnerKnopoff.Decluster(catalog);
        var main = catalog.FindIndex(e => e.Id == "main");
        var aftershock = catalog.FindIndex(e => e.Id == "aftershock-2");

        Assert.Equal(main, result.MainshockIndex[aftershock]);
        Assert.True(result.IsIndependent(main));
        Assert.False(result.IsIndependent(aftershock));
    }

    [Fact]
    public void AZeroForeshockFractionKeepsForeshocks()
    {
        var result = GardnerKnopoff.Decluster(ConstructedCatalog(), foreshockWindowFraction: 0);

        Assert.Contains(result.Independent, e => e.Id == "foreshock");
    }

    [Fact]
    public void ALargerLaterShockIsTheMainshockOfAnEarlierSmallerOne()
    {
        // Largest first: the M 5 comes a day before the M 6.5 and falls in its window, so it is the foreshock.
        List<CatalogEvent> catalog = [Event("m5", 0, 35, -118, 5.0), Event("m65", 1, 35.01, -118, 6.5)];

        var result = GardnerKnopoff.Decluster(catalog);

        Assert.Equal(["m65"], result.Independent.Select(e => e.Id));
    }

    [Fact]
    public void InputOrderDoesNotChangeTheClassification()
    {
        var catalog = ConstructedCatalog();
        var reversed = Enumerable.Reverse(catalog).ToList();

        Assert.Equal(
            GardnerKnopoff.Decluster(catalog).Independent.Select(e => e.Id).Order(),
            GardnerKnopoff.Decluster(reversed).Independent.Select(e => e.Id).Order());
    }

    [Fact]
    public void EmptyAndSingleEventCatalogsAreAllIndependent()
    {
        Assert.Empty(GardnerKnopoff.Decluster([]).Independent);
        Assert.Single(GardnerKnopoff.Decluster([Event("only", 0, 0, 0, 3)]).Independent);
    }

    [Fact]
    public void NaNMagnitudesAndBadFractionsAreRejected()
    {
        Assert.Throws<ArgumentException>(() => GardnerKnopoff.Decluster([Event("bad", 0, 0, 0, double.NaN)]));
        Assert.Throws<ArgumentException>(() => GardnerKnopoff.Decluster([], foreshockWindowFraction: 1.5));
    }
}
