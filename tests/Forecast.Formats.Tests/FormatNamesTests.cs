namespace Forecast.Formats.Tests;

public class FormatNamesTests
{
    [Fact]
    public void GeoJsonUsesTheMediaTypeRegisteredByRfc7946()
    {
        // RFC 7946, section 12: "application/geo+json".
        Assert.Equal("application/geo+json", FormatNames.GeoJson);
    }
}
