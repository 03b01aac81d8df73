using System.Globalization;
using System.Text;
using System.Xml;

namespace Forecast.Formats;

public enum CapMessageType { Alert, Update, Cancel }

/// <summary>The plain values of one CAP alert about a released forecast.</summary>
/// <param name="References">Earlier alerts this one updates or cancels, as (sender, identifier, sent).</param>
/// <param name="Probability">Probability of at least one shock of <paramref name="MinMagnitude"/> or more in the
/// window from <paramref name="WindowStartUtc"/> to <paramref name="WindowEndUtc"/>.</param>
public sealed record CapAlertInput(
    string Identifier, string Sender, DateTime SentUtc, bool Exercise, CapMessageType MessageType,
    IReadOnlyList<(string Sender, string Identifier, DateTime SentUtc)> References, string Event, string Headline,
    string Description, string Instruction, string AreaDescription, double Latitude, double Longitude,
    double RadiusKm, double MinMagnitude, double Probability, DateTime WindowStartUtc, DateTime WindowEndUtc,
    string? Web);

/// <summary>OASIS Common Alerting Protocol 1.2 (OASIS Standard, July 2010) for an aftershock forecast.</summary>
/// <remarks>
/// The rule for the three qualifiers (a project choice; the value definitions are CAP 1.2, 3.2.2):
/// <list type="bullet">
/// <item><description>certainty: Likely when P &gt; 0.5 ("p &gt; ~50%"), Possible when P ≥ 0.01 ("p &lt;= ~50%"),
/// else Unlikely ("p ~ 0");</description></item>
/// <item><description>urgency: Expected ("within the next hour") when the window starts within an hour of
/// <c>sent</c> and certainty is Likely, else Future;</description></item>
/// <item><description>severity from the threshold magnitude: M ≥ 7 Extreme, ≥ 6 Severe, ≥ 5 Moderate, else Minor
/// (common practice in damage terms: M 5 shocks can damage weak buildings, M 7 anywhere near).</description></item>
/// </list>
/// </remarks>
public static class CapAlert
{
    public const string Namespace = "urn:oasis:names:tc:emergency:cap:1.2";

    public static string Certainty(double probability) =>
        probability > 0.5 ? "Likely" : probability >= 0.01 ? "Possible" : "Unlikely";

    public static string Urgency(double probability, DateTime windowStartUtc, DateTime sentUtc) =>
        Certainty(probability) == "Likely" && windowStartUtc - sentUtc <= TimeSpan.FromHours(1) ? "Expected" : "Future";

    public static string Severity(double minMagnitude) =>
        minMagnitude >= 7 ? "Extreme" : minMagnitude >= 6 ? "Severe" : minMagnitude >= 5 ? "Moderate" : "Minor";

    /// <summary>CAP 1.2, 3.3.2: a time with an explicit offset and no fractions; UTC is written "-00:00", since
    /// "Z" must not be used.</summary>
    public static string Time(DateTime utc) =>
        utc.ToUniversalTime().ToString("yyyy-MM-dd'T'HH:mm:ss", CultureInfo.InvariantCulture) + "-00:00";

    public static void Write(Stream stream, CapAlertInput a)
    {
        ArgumentNullException.ThrowIfNull(a);
        foreach (var (name, value) in new[] { ("identifier", a.Identifier), ("sender", a.Sender) })
        {
            // CAP 1.2, 3.2.1: identifier and sender MUST NOT include spaces, commas or restricted characters.
            if (value.Length == 0 || value.Any(c => c is ' ' or ',' or '<' or '&' || char.IsControl(c)))
                throw new ArgumentException($"The CAP {name} must not be empty or hold spaces, commas, '<' or '&'.", nameof(a));
        }
        using var xml = XmlWriter.Create(stream, new XmlWriterSettings
        {
            Encoding = new UTF8Encoding(false), Indent = true, CloseOutput = false,
        });
        xml.WriteStartDocument();
        xml.WriteStartElement("alert", Namespace);
        xml.WriteElementString("identifier", Namespace, a.Identifier);
        xml.WriteElementString("sender", Namespace, a.Sender);
        xml.WriteElementString("sent", Namespace, Time(a.SentUtc));
        xml.WriteElementString("status", Namespace, a.Exercise ? "Exercise" : "Actual");
        xml.WriteElementString("msgType", Namespace, a.MessageType.ToString());
        xml.WriteElementString("scope", Namespace, "Public");
        if (a.References.Count > 0)
        {
            xml.WriteElementString("references", Namespace,
                string.Join(' ', a.References.Select(r => $"{r.Sender},{r.Identifier},{Time(r.SentUtc)}")));
        }
        xml.WriteStartElement("info", Namespace);
        xml.WriteElementString("language", Namespace, "en-US");
        xml.WriteElementString("category", Namespace, "Geo");
        xml.WriteElementString("event", Namespace, a.Event);
        xml.WriteElementString("urgency", Namespace, Urgency(a.Probability, a.WindowStartUtc, a.SentUtc));
        xml.WriteElementString("severity", Namespace, Severity(a.MinMagnitude));
        xml.WriteElementString("certainty", Namespace, Certainty(a.Probability));
        xml.WriteElementString("onset", Namespace, Time(a.WindowStartUtc));
        xml.WriteElementString("expires", Namespace, Time(a.WindowEndUtc));
        xml.WriteElementString("headline", Namespace, a.Headline);
        xml.WriteElementString("description", Namespace, a.Description);
        xml.WriteElementString("instruction", Namespace, a.Instruction);
        if (a.Web is not null) xml.WriteElementString("web", Namespace, a.Web);
        xml.WriteStartElement("area", Namespace);
        xml.WriteElementString("areaDesc", Namespace, a.AreaDescription);
        // CAP 1.2, 3.2.4: circle = "latitude,longitude radius", WGS 84 degrees and km.
        xml.WriteElementString("circle", Namespace, string.Create(CultureInfo.InvariantCulture,
            $"{Math.Round(a.Latitude, 6)},{Math.Round(a.Longitude, 6)} {Math.Round(a.RadiusKm, 3)}"));
        xml.WriteEndElement();
        xml.WriteEndElement();
        xml.WriteEndElement();
        xml.WriteEndDocument();
    }
}
