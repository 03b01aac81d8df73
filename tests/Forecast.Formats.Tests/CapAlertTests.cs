using System.Text;
using System.Xml.Linq;

namespace Forecast.Formats.Tests;

public class CapAlertTests
{
    static readonly XNamespace Cap = "urn:oasis:names:tc:emergency:cap:1.2";
    static readonly DateTime Sent = new(2026, 1, 10, 4, 0, 0, DateTimeKind.Utc);

    static CapAlertInput Input(CapMessageType type = CapMessageType.Alert, bool exercise = false, double p = 0.6,
        double minMagnitude = 5.0) => new(
        "forecast-1-v2", "forecast@example.invalid", Sent, exercise, type,
        type == CapMessageType.Alert ? [] : [("forecast@example.invalid", "forecast-1-v1", Sent.AddHours(-6))],
        "Aftershock forecast", "Aftershocks are likely", "Invented description.", "Invented instruction.",
        "Within 25 km of the invented mainshock", 12.5, -30.25, 25, minMagnitude, p, Sent, Sent.AddDays(7),
        "https://example.invalid/f-1");

    static XElement Write(CapAlertInput input)
    {
        using var buffer = new MemoryStream();
        CapAlert.Write(buffer, input);
        return XDocument.Parse(Encoding.UTF8.GetString(buffer.ToArray())).Root!;
    }

    [Fact]
    public void TheAlertHasEveryRequiredElementInOrder()
    {
        var alert = Write(Input());
        // CAP 1.2, 3.2.1: alert requires identifier, sender, sent, status, msgType, scope, in this order.
        Assert.Equal(Cap + "alert", alert.Name);
        Assert.Equal(["identifier", "sender", "sent", "status", "msgType", "scope", "info"],
            alert.Elements().Select(e => e.Name.LocalName));
        // CAP 1.2, 3.3.2: dateTime with offset; "-00:00" for UTC, never "Z".
        Assert.Equal("2026-01-10T04:00:00-00:00", alert.Element(Cap + "sent")!.Value);
        Assert.Equal("Actual", alert.Element(Cap + "status")!.Value);
        Assert.Equal("Public", alert.Element(Cap + "scope")!.Value);
    }

    [Fact]
    public void TheInfoBlockCarriesTheRequiredElementsFromTheValueLists()
    {
        var info = Write(Input()).Element(Cap + "info")!;
        // CAP 1.2, 3.2.2: category, event, urgency, severity, certainty are required; value lists below.
        Assert.Equal("Geo", info.Element(Cap + "category")!.Value);
        Assert.Equal("Aftershock forecast", info.Element(Cap + "event")!.Value);
        Assert.Contains(info.Element(Cap + "urgency")!.Value, new[] { "Immediate", "Expected", "Future", "Past", "Unknown" });
        Assert.Contains(info.Element(Cap + "severity")!.Value, new[] { "Extreme", "Severe", "Moderate", "Minor", "Unknown" });
        Assert.Contains(info.Element(Cap + "certainty")!.Value, new[] { "Observed", "Likely", "Possible", "Unlikely", "Unknown" });
        Assert.Equal("Invented description.", info.Element(Cap + "description")!.Value);
        Assert.Equal("Invented instruction.", info.Element(Cap + "instruction")!.Value);
        // CAP 1.2, 3.2.4: area requires areaDesc; circle is "lat,lon radius" with the radius in km.
        var area = info.Element(Cap + "area")!;
        Assert.Equal("Within 25 km of the invented mainshock", area.Element(Cap + "areaDesc")!.Value);
        Assert.Equal("12.5,-30.25 25", area.Element(Cap + "circle")!.Value);
    }

    [Theory]
    [InlineData(0.6, "Likely")]
    [InlineData(0.5, "Possible")]
    [InlineData(0.01, "Possible")]
    [InlineData(0.005, "Unlikely")]
    public void CertaintyFollowsTheSpecsProbabilityWords(double p, string expected)
    {
        // CAP 1.2, 3.2.2 certainty: Likely "p > ~50%", Possible "p <= ~50%", Unlikely "p ~ 0".
        Assert.Equal(expected, CapAlert.Certainty(p));
    }

    [Fact]
    public void AnUpdateOrCancelReferencesTheEarlierAlertAndAnExerciseSaysSo()
    {
        // CAP 1.2, 3.2.1: msgType Update/Cancel; references "sender,identifier,sent" separated by spaces;
        // status Exercise for drills.
        var cancel = Write(Input(CapMessageType.Cancel, exercise: true));
        Assert.Equal("Cancel", cancel.Element(Cap + "msgType")!.Value);
        Assert.Equal("Exercise", cancel.Element(Cap + "status")!.Value);
        Assert.Equal("forecast@example.invalid,forecast-1-v1,2026-01-09T22:00:00-00:00",
            cancel.Element(Cap + "references")!.Value);
    }

    [Fact]
    public void AnIdentifierWithSpacesOrCommasIsRefused()
    {
        // CAP 1.2, 3.2.1 identifier: "MUST NOT include spaces, commas or restricted characters (< and &)".
        Assert.Throws<ArgumentException>(() => Write(Input() with { Identifier = "a b" }));
        Assert.Throws<ArgumentException>(() => Write(Input() with { Sender = "a,b" }));
    }
}
