using System.Text;
using System.Xml;
using Forecast.Core.Events;

namespace Forecast.Formats;

/// <summary>QuakeML 1.2, Basic Event Description (BED): the events of an <c>eventParameters</c> element.</summary>
/// <remarks>
/// <para>Reading is streamed: one event is read, checked and yielded before the next is looked at, so memory does
/// not grow with the document. Each event gives:</para>
/// <list type="bullet">
/// <item><description>id: the event's <c>publicID</c>;</description></item>
/// <item><description>time, latitude, longitude, depth: the preferred origin (<c>preferredOriginID</c>), else the
/// event's first origin. Depth is in metres in QuakeML and becomes km; a missing depth is stored as 0 km;
/// </description></item>
/// <item><description>magnitude and type: the preferred magnitude (<c>preferredMagnitudeID</c>), else the first;
/// other magnitudes are ignored; a missing type is stored as "M";</description></item>
/// <item><description>status: <c>deleted</c> when the event's type is "not existing"; else <c>reviewed</c> when the
/// chosen origin's evaluationMode is manual or its evaluationStatus is reviewed, final or confirmed; else
/// <c>automatic</c>;</description></item>
/// <item><description>source: the reader's <see cref="CatalogReadOptions.Source"/> when set, else the event's
/// <c>creationInfo/agencyID</c>, else the chosen origin's; one of them is required.</description></item>
/// </list>
/// <para>Security: no DTD (so no external or expanding entities), no resolver, a cap on document characters, on
/// the longest tag or text run (<see cref="TokenLimitStream"/>) and on nesting depth. Elements of other
/// namespaces (extensions) are skipped.</para>
/// </remarks>
public static class QuakeMl
{
    public const string Namespace = "http://quakeml.org/xmlns/quakeml/1.2";
    public const string BedNamespace = "http://quakeml.org/xmlns/bed/1.2";

    /// <summary>The QuakeML 1.2 EventType value that retracts an event (SeisComP and others send it).</summary>
    public const string NotExisting = "not existing";

    /// <summary>The events of the document, one at a time. Throws <see cref="CatalogFormatException"/> (with line
    /// and position) for a document that is not well-formed, not QuakeML 1.2, or over a limit.</summary>
    public static IEnumerable<EventItem> ReadEvents(Stream stream, CatalogReadOptions options)
    {
        using var reader = new QuakeMlEventReader(stream, options);
        while (reader.Next() is { } item) yield return item;
    }

    public static XmlReaderSettings ReaderSettings(CatalogReadOptions options) => new()
    {
        DtdProcessing = DtdProcessing.Prohibit,
        XmlResolver = null,
        MaxCharactersInDocument = options.MaxCharacters,
        MaxCharactersFromEntities = 1024,
        IgnoreComments = true,
        IgnoreProcessingInstructions = true,
        IgnoreWhitespace = true,
        CloseInput = false,
    };
}

sealed class QuakeMlEventReader : IDisposable
{
    sealed class OriginData
    {
        public string? PublicId;
        public Located? Time, Latitude, Longitude, Depth, Mode, Status, Agency;
    }

    sealed class MagnitudeData
    {
        public string? PublicId;
        public Located? Value, Type;
    }

    readonly XmlReader _xml;
    readonly IXmlLineInfo _where;
    readonly CatalogReadOptions _options;
    int _state;
    int _index;

    public QuakeMlEventReader(Stream stream, CatalogReadOptions options)
    {
        _options = options;
        var guarded = new TokenLimitStream(stream, (byte)'<', (byte)'>', options.MaxTokenBytes);
        _xml = XmlReader.Create(guarded, QuakeMl.ReaderSettings(options));
        _where = (IXmlLineInfo)_xml;
    }

    public void Dispose() => _xml.Dispose();

    public EventItem? Next()
    {
        try
        {
            return NextCore();
        }
        catch (XmlException e)
        {
            // Some refusals (a DTD under DtdProcessing.Prohibit) carry no position: the reader's is then right.
            var known = e.LineNumber > 0;
            // The framework's text for a prohibited DTD names its own settings; say what it means instead.
            var why = e.Message.Contains("DTD", StringComparison.Ordinal)
                ? "it has a DTD (document type declaration), which QuakeML does not use and which is refused because " +
                  "its entities can read files or expand without bound"
                : e.Message;
            throw new CatalogFormatException("The document is not well-formed XML or breaks a limit: " + why,
                known ? e.LineNumber : _where.LineNumber, known ? e.LinePosition : _where.LinePosition, e);
        }
        catch (CatalogFormatException e) when (e.Line == 0)
        {
            throw new CatalogFormatException(e.Message, _where.LineNumber, _where.LinePosition, e);
        }
    }

    EventItem? NextCore()
    {
        while (true)
        {
            switch (_state)
            {
                case 0:
                    _xml.MoveToContent();
                    if (_xml.NodeType != XmlNodeType.Element || _xml.LocalName != "quakeml"
                        || _xml.NamespaceURI != QuakeMl.Namespace)
                    {
                        throw Fatal($"The root element is <{_xml.LocalName}> in namespace '{_xml.NamespaceURI}'; " +
                            $"a QuakeML 1.2 document has <quakeml> in '{QuakeMl.Namespace}'");
                    }
                    if (_xml.IsEmptyElement) return Done();
                    Read();
                    _state = 1;
                    break;
                case 1:
                    if (_xml.NodeType == XmlNodeType.EndElement || _xml.EOF) return Done();
                    if (_xml.NodeType != XmlNodeType.Element) Read();
                    else if (_xml.LocalName == "eventParameters" && _xml.NamespaceURI == QuakeMl.BedNamespace)
                    {
                        if (_xml.IsEmptyElement) Read();
                        else
                        {
                            Read();
                            _state = 2;
                        }
                    }
                    else Skip();
                    break;
                case 2:
                    if (_xml.EOF) return Done();
                    if (_xml.NodeType == XmlNodeType.EndElement)
                    {
                        Read();
                        _state = 1;
                    }
                    else if (_xml.NodeType != XmlNodeType.Element) Read();
                    else if (_xml.LocalName == "event" && _xml.NamespaceURI == QuakeMl.BedNamespace)
                    {
                        return ReadEvent(_index++);
                    }
                    else Skip();
                    break;
                default:
                    return null;
            }
        }
    }

    EventItem? Done()
    {
        _state = 3;
        return null;
    }

    EventItem ReadEvent(int index)
    {
        var line = _where.LineNumber;
        var position = _where.LinePosition;
        var publicId = _xml.GetAttribute("publicID");
        Located? preferredOrigin = null, preferredMagnitude = null, type = null, agency = null;
        var origins = new List<OriginData>(1);
        var magnitudes = new List<MagnitudeData>(1);
        Children(name =>
        {
            switch (name)
            {
                case "preferredOriginID": preferredOrigin = ReadText(); break;
                case "preferredMagnitudeID": preferredMagnitude = ReadText(); break;
                case "type": type = ReadText(); break;
                case "creationInfo": agency = ReadAgency(); break;
                case "origin": origins.Add(ReadOrigin()); break;
                case "magnitude": magnitudes.Add(ReadMagnitude()); break;
                default: Skip(); break;
            }
        });

        var f = new EventFields(index);
        var id = f.Text(publicId is null ? null : new Located(publicId, line, position), "publicID",
            EventRules.CheckId, line);

        OriginData? origin = null;
        if (preferredOrigin is { } po && po.Text.Trim().Length > 0)
        {
            origin = origins.Find(o => o.PublicId == po.Text.Trim());
            if (origin is null) f.Add("preferredOriginID", "names no origin of this event", po.Line, po.Position);
        }
        else if (origins.Count > 0) origin = origins[0];
        else f.Add("origin", "is required: the event has no origin", line, position);

        MagnitudeData? magnitude = null;
        if (preferredMagnitude is { } pm && pm.Text.Trim().Length > 0)
        {
            magnitude = magnitudes.Find(m => m.PublicId == pm.Text.Trim());
            if (magnitude is null)
                f.Add("preferredMagnitudeID", "names no magnitude of this event", pm.Line, pm.Position);
        }
        else if (magnitudes.Count > 0) magnitude = magnitudes[0];
        else f.Add("magnitude", "is required: the event has no magnitude", line, position);

        string? source;
        if (_options.Source is { } forced) source = f.Text(new Located(forced, line, 0), "source", EventRules.CheckSource, line);
        else if ((agency ?? origin?.Agency) is { } a && a.Text.Trim().Length > 0)
            source = f.Text(a, "creationInfo.agencyID", EventRules.CheckSource, line);
        else
        {
            source = null;
            f.Add("creationInfo.agencyID",
                "is required to name the event's source (or send the source query parameter)", line, position);
        }

        DateTime? time = null;
        double? latitude = null, longitude = null, depthKm = null, mag = null;
        string? magnitudeType = null;
        if (origin is not null)
        {
            time = f.Time(origin.Time, "origin.time", _options.NowUtc, line);
            latitude = f.Number(origin.Latitude, "origin.latitude", EventRules.CheckLatitude, line);
            longitude = f.Number(origin.Longitude, "origin.longitude", EventRules.CheckLongitude, line);
            depthKm = f.Number(origin.Depth, "origin.depth", EventRules.CheckDepthKm, line, powerOfTen: -3,
                required: false, fallback: EventFields.UnknownDepthKm);
        }
        if (magnitude is not null)
        {
            mag = f.Number(magnitude.Value, "magnitude.mag", EventRules.CheckMagnitude, line);
            magnitudeType = magnitude.Type is { } t && t.Text.Trim().Length > 0
                ? f.Text(t, "magnitude.type", EventRules.CheckMagnitudeType, line)
                : EventFields.UnknownMagnitudeType;
        }

        if (f.Errors.Count > 0) return new EventItem(index, line, null, f.Errors);
        var status = string.Equals(type?.Text.Trim(), QuakeMl.NotExisting, StringComparison.Ordinal) ? "deleted"
            : IsReviewed(origin!) ? "reviewed"
            : "automatic";
        return new EventItem(index, line, new EventRecord(source!, id!, time!.Value, latitude!.Value,
            longitude!.Value, depthKm!.Value, mag!.Value, magnitudeType!, status), []);
    }

    static bool IsReviewed(OriginData o) =>
        o.Mode?.Text.Trim() == "manual" || o.Status?.Text.Trim() is "reviewed" or "final" or "confirmed";

    OriginData ReadOrigin()
    {
        var o = new OriginData { PublicId = _xml.GetAttribute("publicID")?.Trim() };
        Children(name =>
        {
            switch (name)
            {
                case "time": o.Time = ReadValue(); break;
                case "latitude": o.Latitude = ReadValue(); break;
                case "longitude": o.Longitude = ReadValue(); break;
                case "depth": o.Depth = ReadValue(); break;
                case "evaluationMode": o.Mode = ReadText(); break;
                case "evaluationStatus": o.Status = ReadText(); break;
                case "creationInfo": o.Agency = ReadAgency(); break;
                default: Skip(); break;
            }
        });
        return o;
    }

    MagnitudeData ReadMagnitude()
    {
        var m = new MagnitudeData { PublicId = _xml.GetAttribute("publicID")?.Trim() };
        Children(name =>
        {
            switch (name)
            {
                case "mag": m.Value = ReadValue(); break;
                case "type": m.Type = ReadText(); break;
                default: Skip(); break;
            }
        });
        return m;
    }

    /// <summary>The <c>value</c> of a QuakeML quantity (<c>&lt;latitude&gt;&lt;value&gt;…</c>); uncertainties are
    /// not kept.</summary>
    Located? ReadValue()
    {
        Located? value = null;
        Children(name =>
        {
            if (name == "value") value = ReadText();
            else Skip();
        });
        return value;
    }

    Located? ReadAgency()
    {
        Located? agency = null;
        Children(name =>
        {
            if (name == "agencyID") agency = ReadText();
            else Skip();
        });
        return agency;
    }

    /// <summary>Visits the child elements of the current element in the BED namespace; the visitor must read or
    /// skip each one whole. Leaves the reader after the element's end.</summary>
    void Children(Action<string> visit)
    {
        if (_xml.IsEmptyElement)
        {
            Read();
            return;
        }
        var depth = _xml.Depth;
        Read();
        while (true)
        {
            if (_xml.NodeType == XmlNodeType.EndElement && _xml.Depth == depth)
            {
                Read();
                return;
            }
            if (_xml.NodeType == XmlNodeType.Element)
            {
                if (_xml.NamespaceURI == QuakeMl.BedNamespace) visit(_xml.LocalName);
                else Skip();
            }
            else Read();
        }
    }

    /// <summary>The text of a simple element; child elements inside it are skipped.</summary>
    Located ReadText()
    {
        var line = _where.LineNumber;
        var position = _where.LinePosition;
        if (_xml.IsEmptyElement)
        {
            Read();
            return new Located("", line, position);
        }
        var depth = _xml.Depth;
        Read();
        string? first = null;
        StringBuilder? more = null;
        while (!(_xml.NodeType == XmlNodeType.EndElement && _xml.Depth == depth))
        {
            if (_xml.NodeType is XmlNodeType.Text or XmlNodeType.CDATA or XmlNodeType.SignificantWhitespace)
            {
                if (first is null) first = _xml.Value;
                else (more ??= new StringBuilder(first)).Append(_xml.Value);
                Read();
            }
            else if (_xml.NodeType == XmlNodeType.Element) Skip();
            else Read();
        }
        Read();
        return new Located(more?.ToString() ?? first ?? "", line, position);
    }

    void Skip()
    {
        if (_xml.IsEmptyElement)
        {
            Read();
            return;
        }
        var depth = _xml.Depth;
        while (Read())
        {
            if (_xml.NodeType == XmlNodeType.EndElement && _xml.Depth == depth)
            {
                Read();
                return;
            }
        }
    }

    bool Read()
    {
        if (!_xml.Read()) return false;
        if (_xml.Depth > _options.MaxDepth)
            throw Fatal($"Elements are nested more than {_options.MaxDepth} deep; QuakeML needs far fewer");
        return true;
    }

    CatalogFormatException Fatal(string message) =>
        new(message, _where.LineNumber, _where.LinePosition);
}
