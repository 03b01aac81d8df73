using System.Text;
using System.Xml;

namespace Forecast.Formats;

/// <summary>Writes events as a QuakeML 1.2 BED document, one at a time, so that <see cref="QuakeMl.ReadEvents"/>
/// gives back exactly the same records.</summary>
/// <remarks>
/// Each event gets one origin (<c>{id}#origin</c>) and one magnitude (<c>{id}#magnitude</c>), both named as
/// preferred; the source is the event's <c>creationInfo/agencyID</c>; depth is written in metres by shifting the
/// decimal point (<see cref="DecimalText"/>), so no bit is lost; <c>reviewed</c> is evaluationMode manual with
/// evaluationStatus reviewed, <c>automatic</c> is automatic and preliminary, <c>deleted</c> is event type
/// "not existing". Ids are written as they were received: QuakeML wants <c>smi:</c> resource identifiers, and an
/// id such as <c>ex-1</c> is exported unchanged rather than rewritten, so that a re-import finds the same event.
/// </remarks>
public sealed class QuakeMlWriter : IDisposable
{
    /// <summary><c>smi:local/</c> is the conventional prefix of identifiers without a registered authority
    /// (common practice).</summary>
    public const string DefaultEventParametersId = "smi:local/forecast/events";

    readonly XmlWriter _xml;
    bool _done;

    public QuakeMlWriter(Stream stream, string eventParametersId = DefaultEventParametersId)
    {
        _xml = XmlWriter.Create(stream, new XmlWriterSettings
        {
            Encoding = new UTF8Encoding(false),
            Indent = true,
            CloseOutput = false,
        });
        _xml.WriteStartDocument();
        _xml.WriteStartElement("q", "quakeml", QuakeMl.Namespace);
        _xml.WriteAttributeString(null, "xmlns", "http://www.w3.org/2000/xmlns/", QuakeMl.BedNamespace);
        _xml.WriteStartElement("eventParameters", QuakeMl.BedNamespace);
        _xml.WriteAttributeString("publicID", eventParametersId);
    }

    public static void Write(Stream stream, IEnumerable<EventRecord> events)
    {
        using var writer = new QuakeMlWriter(stream);
        foreach (var e in events) writer.Write(e);
    }

    public void Write(EventRecord e)
    {
        ArgumentNullException.ThrowIfNull(e);
        var originId = e.Id + "#origin";
        var magnitudeId = e.Id + "#magnitude";
        var reviewed = e.Status == "reviewed";
        const string bed = QuakeMl.BedNamespace;

        _xml.WriteStartElement("event", bed);
        _xml.WriteAttributeString("publicID", e.Id);
        _xml.WriteElementString("preferredOriginID", bed, originId);
        _xml.WriteElementString("preferredMagnitudeID", bed, magnitudeId);
        if (e.Status == "deleted") _xml.WriteElementString("type", bed, QuakeMl.NotExisting);
        _xml.WriteStartElement("creationInfo", bed);
        _xml.WriteElementString("agencyID", bed, e.Source);
        _xml.WriteEndElement();

        _xml.WriteStartElement("origin", bed);
        _xml.WriteAttributeString("publicID", originId);
        Quantity("time", IsoTime.Write(e.TimeUtc));
        Quantity("latitude", DecimalText.Format(e.Latitude));
        Quantity("longitude", DecimalText.Format(e.Longitude));
        Quantity("depth", DecimalText.Format(e.DepthKm, powerOfTen: 3));
        _xml.WriteElementString("evaluationMode", bed, reviewed ? "manual" : "automatic");
        _xml.WriteElementString("evaluationStatus", bed, reviewed ? "reviewed" : "preliminary");
        _xml.WriteEndElement();

        _xml.WriteStartElement("magnitude", bed);
        _xml.WriteAttributeString("publicID", magnitudeId);
        Quantity("mag", DecimalText.Format(e.Magnitude));
        _xml.WriteElementString("type", bed, e.MagnitudeType);
        _xml.WriteElementString("originID", bed, originId);
        _xml.WriteEndElement();

        _xml.WriteEndElement();
    }

    void Quantity(string name, string value)
    {
        _xml.WriteStartElement(name, QuakeMl.BedNamespace);
        _xml.WriteElementString("value", QuakeMl.BedNamespace, value);
        _xml.WriteEndElement();
    }

    public void Dispose()
    {
        if (_done) return;
        _done = true;
        _xml.WriteEndElement();
        _xml.WriteEndElement();
        _xml.WriteEndDocument();
        _xml.Flush();
        _xml.Dispose();
    }

}
