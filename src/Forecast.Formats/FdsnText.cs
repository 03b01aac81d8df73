using System.Text;
using Forecast.Core.Events;

namespace Forecast.Formats;

/// <summary>The FDSN event web service's <c>format=text</c>: a '#' header line, then one '|'-separated line per
/// event (FDSN Web Service Specifications v1.2, fdsnws-event, text format; column list from memory).</summary>
/// <remarks>
/// <para>Columns: EventID|Time|Latitude|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|
/// Magnitude|MagAuthor|EventLocationName, and EventType as a 14th column where newer services add it. Required:
/// EventID, Time, Latitude, Longitude, Magnitude. An empty Depth/km is stored as 0 km, an empty MagType as "M".
/// </para>
/// <para>Source: <see cref="CatalogReadOptions.Source"/> when set, else Contributor, else Catalog. The format has
/// no review state: events are <see cref="CatalogReadOptions.Status"/> (default automatic), or <c>deleted</c>
/// when EventType is "not existing".</para>
/// <para>Every data line must have as many fields as the header: a '|' inside a value cannot be told from a
/// separator, so a line with extra or missing fields is refused rather than guessed at. Lines starting with '#'
/// after the header are comments.</para>
/// </remarks>
public static class FdsnText
{
    public static readonly IReadOnlyList<string> Columns =
    [
        "EventID", "Time", "Latitude", "Longitude", "Depth/km", "Author", "Catalog", "Contributor", "ContributorID",
        "MagType", "Magnitude", "MagAuthor", "EventLocationName",
    ];

    public const string EventTypeColumn = "EventType";

    const int EventId = 0, Time = 1, Latitude = 2, Longitude = 3, Depth = 4, Catalog = 6, Contributor = 7,
        ContributorId = 8, MagType = 9, Magnitude = 10, EventType = 13;

    /// <summary>Reads UTF-8 (or a BOM-marked encoding) text; lines longer than
    /// <see cref="CatalogReadOptions.MaxTokenBytes"/> are refused before they are buffered, and bytes that are not
    /// UTF-8 (RFC 3629) refuse the document rather than turning into U+FFFD in an id.</summary>
    public static IEnumerable<EventItem> ReadEvents(Stream stream, CatalogReadOptions options)
    {
        using var text = new StreamReader(new TokenLimitStream(stream, (byte)'\n', (byte)'\n', options.MaxTokenBytes),
            StrictUtf8, detectEncodingFromByteOrderMarks: true, bufferSize: 64 * 1024, leaveOpen: true);
        foreach (var item in ReadEvents(text, options)) yield return item;
    }

    public static IEnumerable<EventItem> ReadEvents(TextReader reader, CatalogReadOptions options)
    {
        long lineNumber = 0, characters = 0;
        var columns = 0;
        var index = 0;
        while (ReadLine(reader, lineNumber) is { } line)
        {
            lineNumber++;
            characters += line.Length + 1;
            if (characters > options.MaxCharacters)
            {
                throw new CatalogFormatException(FormattableString.Invariant(
                    $"The document is longer than {options.MaxCharacters} characters"), lineNumber);
            }
            if (string.IsNullOrWhiteSpace(line)) continue;
            if (columns == 0)
            {
                columns = Header(line, lineNumber);
                continue;
            }
            if (line[0] == '#') continue;
            yield return Event(line, lineNumber, index++, columns, options);
        }
        if (columns == 0)
            throw new CatalogFormatException("The document is empty: FDSN text starts with a header line " + HeaderLine);
    }

    static readonly UTF8Encoding StrictUtf8 = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

    static string? ReadLine(TextReader reader, long linesRead)
    {
        try
        {
            return reader.ReadLine();
        }
        catch (DecoderFallbackException)
        {
            // The reader decodes a buffer ahead of the line it returns, so the place is known only roughly.
            throw new CatalogFormatException(FormattableString.Invariant(
                $"The text is not valid UTF-8 (RFC 3629) at or after line {linesRead + 1}"), linesRead + 1);
        }
    }

    static string HeaderLine => "#" + string.Join('|', Columns);

    static int Header(string line, long lineNumber)
    {
        if (line[0] != '#')
        {
            throw new CatalogFormatException(
                "The first line must be the FDSN text header " + HeaderLine + " (with EventType optionally last)",
                lineNumber);
        }
        var names = line[1..].Split('|');
        if (names.Length != Columns.Count && names.Length != Columns.Count + 1)
        {
            throw new CatalogFormatException(FormattableString.Invariant(
                $"The header has {names.Length} columns; FDSN text has {Columns.Count}, or {Columns.Count + 1} with EventType"),
                lineNumber);
        }
        for (var i = 0; i < names.Length; i++)
        {
            var expected = i < Columns.Count ? Columns[i] : EventTypeColumn;
            if (!string.Equals(names[i].Replace(" ", "", StringComparison.Ordinal), expected,
                    StringComparison.OrdinalIgnoreCase))
            {
                throw new CatalogFormatException(FormattableString.Invariant(
                    $"Header column {i + 1} is '{names[i].Trim()}'; FDSN text has '{expected}' there"), lineNumber);
            }
        }
        return names.Length;
    }

    static EventItem Event(string line, long lineNumber, int index, int columns, CatalogReadOptions options)
    {
        var f = new EventFields(index);
        var fields = line.Split('|');
        if (fields.Length != columns)
        {
            f.Add("", FormattableString.Invariant(
                $"has {fields.Length} fields where the header has {columns} (is there a '|' inside a value, or one missing?)"),
                lineNumber);
            return new EventItem(index, lineNumber, null, f.Errors);
        }
        Located? At(int column) => new(fields[column].Trim(), lineNumber, 0);

        var id = f.Text(At(EventId), Columns[EventId], EventRules.CheckId, lineNumber);
        var time = f.Time(At(Time), Columns[Time], options.NowUtc, lineNumber);
        var latitude = f.Number(At(Latitude), Columns[Latitude], EventRules.CheckLatitude, lineNumber);
        var longitude = f.Number(At(Longitude), Columns[Longitude], EventRules.CheckLongitude, lineNumber);
        var depthKm = f.Number(At(Depth), Columns[Depth], EventRules.CheckDepthKm, lineNumber, required: false,
            fallback: EventFields.UnknownDepthKm);
        var magnitude = f.Number(At(Magnitude), Columns[Magnitude], EventRules.CheckMagnitude, lineNumber);
        var magnitudeType = fields[MagType].Trim().Length == 0 ? EventFields.UnknownMagnitudeType
            : f.Text(At(MagType), Columns[MagType], EventRules.CheckMagnitudeType, lineNumber);

        string? source;
        if (options.Source is { } forced)
            source = f.Text(new Located(forced, lineNumber, 0), "source", EventRules.CheckSource, lineNumber);
        else if (fields[Contributor].Trim().Length > 0)
            source = f.Text(At(Contributor), Columns[Contributor], EventRules.CheckSource, lineNumber);
        else if (fields[Catalog].Trim().Length > 0)
            source = f.Text(At(Catalog), Columns[Catalog], EventRules.CheckSource, lineNumber);
        else
        {
            source = null;
            f.Add(Columns[Contributor], "is required to name the source (or Catalog, or the source query parameter)",
                lineNumber);
        }
        var status = columns > EventType && string.Equals(fields[EventType].Trim(), QuakeMl.NotExisting,
            StringComparison.OrdinalIgnoreCase) ? "deleted" : options.Status ?? "automatic";
        if (EventRules.CheckStatus(status) is { } why) f.Add("status", why, lineNumber);

        if (f.Errors.Count > 0) return new EventItem(index, lineNumber, null, f.Errors);
        return new EventItem(index, lineNumber, new EventRecord(source!, id!, time!.Value, latitude!.Value,
            longitude!.Value, depthKm!.Value, magnitude!.Value, magnitudeType!, status), []);
    }

    /// <summary>Why the event cannot be written as FDSN text, or null: the format has no escaping, so an id with
    /// a '|' cannot be represented.</summary>
    public static string? CannotWrite(EventRecord e) =>
        e.Id.Contains('|', StringComparison.Ordinal) ? $"the id '{e.Id}' contains '|', the FDSN text separator" : null;

    /// <summary>Writes the 14-column form (EventType last: empty, or "not existing" for a retracted event). Source
    /// goes in Catalog and Contributor, the id in EventID and ContributorID; times are UTC with microseconds and
    /// no zone designator, as FDSN services write them. The review state is not representable.</summary>
    public static void Write(TextWriter writer, IEnumerable<EventRecord> events)
    {
        ArgumentNullException.ThrowIfNull(writer);
        writer.Write(HeaderLine);
        writer.Write('|');
        writer.Write(EventTypeColumn);
        writer.Write('\n');
        foreach (var e in events)
        {
            if (CannotWrite(e) is { } why) throw new ArgumentException(why, nameof(events));
            writer.Write(e.Id);
            writer.Write('|');
            writer.Write(IsoTime.Write(e.TimeUtc).TrimEnd('Z'));
            writer.Write('|');
            writer.Write(DecimalText.Format(e.Latitude));
            writer.Write('|');
            writer.Write(DecimalText.Format(e.Longitude));
            writer.Write('|');
            writer.Write(DecimalText.Format(e.DepthKm));
            writer.Write("||");
            writer.Write(e.Source);
            writer.Write('|');
            writer.Write(e.Source);
            writer.Write('|');
            writer.Write(e.Id);
            writer.Write('|');
            writer.Write(e.MagnitudeType);
            writer.Write('|');
            writer.Write(DecimalText.Format(e.Magnitude));
            writer.Write("|||");
            writer.Write(e.Status == "deleted" ? QuakeMl.NotExisting : "");
            writer.Write('\n');
        }
    }
}
