namespace Forecast.Formats.Tests;

public class DecimalTextTests
{
    [Theory]
    [InlineData(8.123, 3, "8123")]
    [InlineData(8.5, 3, "8500")]
    [InlineData(-10, 3, "-10000")]
    [InlineData(0.000123, 3, "0.123")]
    [InlineData(1e-5, 3, "0.01")]
    [InlineData(0, 3, "0")]
    [InlineData(1.0 / 3, 3, "333.3333333333333")]
    [InlineData(12345.6, -3, "12.3456")]
    public void ShiftsTheDecimalPointOfTheShortestRoundTripText(double value, int power, string expected)
    {
        Assert.Equal(expected, DecimalText.Format(value, power));
    }

    [Fact]
    public void KilometresWrittenAsMetresReadBackToTheSameDouble()
    {
        // Not true of x * 1000 / 1000 in binary floating point; true of the decimal shift.
        var random = new Random(7);
        for (var i = 0; i < 100_000; i++)
        {
            var km = Math.Round(random.NextDouble() * 810 - 10, random.Next(0, 16));
            Assert.True(DecimalText.TryParse(DecimalText.Format(km, 3), -3, out var back));
            Assert.Equal(km, back);
        }
    }

    [Theory]
    [InlineData("NaN")]
    [InlineData("INF")]
    [InlineData("1e")]
    [InlineData("1.2.3")]
    [InlineData("1e9999999")]
    [InlineData("")]
    [InlineData(".")]
    [InlineData("1,5")]
    public void RefusesWhatIsNotAFiniteDecimal(string text)
    {
        Assert.False(DecimalText.TryParse(text, 0, out _));
    }
}
