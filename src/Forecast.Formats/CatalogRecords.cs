namespace Forecast.Formats;

/// <summary>One event as every format reads and writes it: the fields the service stores, already checked
/// against <see cref="Forecast.Core.Events.EventRules"/>.</summary>
/// <param name="Status"><c>automatic</c>, <c>reviewed</c> or <c>deleted</c>.</param>
public sealed record EventRecord(
    string Source, string Id, DateTime TimeUtc, double Latitude, double Longitude, double DepthKm,
    double Magnitude, string MagnitudeType, string Status);

/// <summary>A problem with one field of one event, or with the document (<see cref="Index"/> null).</summary>
/// <param name="Index">0-based position of the event in the document.</param>
/// <param name="Field">Where, in the format's own terms (<c>origin.latitude</c>, <c>Magnitude</c>).</param>
/// <param name="Line">1-based line, 0 when unknown.</param>
/// <param name="Position">1-based character position in the line, 0 when not meaningful (FDSN text).</param>
public sealed record FormatError(int? Index, string Field, string Message, long Line, long Position)
{
    /// <summary>The key of the problem details' <c>errors</c>, shaped like the JSON ingest's (<c>[3].latitude</c>).
    /// </summary>
    public string Key => Index is { } i ? (Field.Length == 0 ? $"[{i}]" : $"[{i}].{Field}") : Field;

    /// <summary>The message with where it happened.</summary>
    public string Text => Line <= 0 ? Message
        : Position > 0 ? FormattableString.Invariant($"{Message} (line {Line}, position {Position})")
        : FormattableString.Invariant($"{Message} (line {Line})");
}

/// <summary>A document-level problem (not well-formed, over a limit, not the expected format): nothing in the
/// document can be trusted after it.</summary>
public sealed class CatalogFormatException(string message, long line = 0, long position = 0, Exception? inner = null)
    : Exception(message, inner)
{
    public long Line { get; } = line;
    public long Position { get; } = position;

    public FormatError ToError() => new(null, "", Message, Line, Position);
}

/// <summary>One event of a document as the streaming readers yield it: either a record or its problems.</summary>
public sealed record EventItem(int Index, long Line, EventRecord? Event, IReadOnlyList<FormatError> Errors);

/// <summary>How a reader treats a document.</summary>
public sealed record CatalogReadOptions
{
    /// <summary>The current time; origin times later than this plus the allowed skew are refused.</summary>
    public required DateTime NowUtc { get; init; }

    /// <summary>When set, the source of every event, whatever the document says (it names the feed).</summary>
    public string? Source { get; init; }

    /// <summary>FDSN text carries no review state: the status of its events that are not retracted
    /// (default <c>automatic</c>). QuakeML says it per origin and ignores this.</summary>
    public string? Status { get; init; }

    /// <summary>Largest document in characters (the XML reader's MaxCharactersInDocument).</summary>
    public long MaxCharacters { get; init; } = 64L * 1024 * 1024;

    /// <summary>Longest tag, text run (XML) or line (FDSN text) in bytes; caps what a reader buffers.</summary>
    public int MaxTokenBytes { get; init; } = 1024 * 1024;

    /// <summary>Deepest element nesting accepted in XML (QuakeML needs about 8).</summary>
    public int MaxDepth { get; init; } = 32;
}

/// <summary>What a pass over a document found, without its events (<see cref="CatalogReader.Scan"/>).</summary>
public sealed record CatalogScan(
    IReadOnlyList<FormatError> Errors, int Count, int BadItems, FormatError? Fatal, bool TooManyEvents)
{
    public bool IsValid => Fatal is null && !TooManyEvents && Errors.Count == 0 && Count > 0;
}

/// <summary>A whole document read: the events when every one is good, else the problems.</summary>
public sealed record CatalogReadResult(
    IReadOnlyList<EventRecord> Events, IReadOnlyList<FormatError> Errors, int Count, int BadItems,
    FormatError? Fatal, bool TooManyEvents)
{
    public bool IsValid => Fatal is null && !TooManyEvents && Errors.Count == 0 && Count > 0;
}

public static class CatalogReader
{
    public const int MaxReportedErrors = 200;

    /// <summary>Drains a streaming reader into a list, collecting at most <see cref="MaxReportedErrors"/>
    /// problems; stops at <paramref name="maxEvents"/> + 1 events. The caller stores nothing unless the result
    /// <see cref="CatalogReadResult.IsValid"/>.</summary>
    public static CatalogReadResult ReadAll(IEnumerable<EventItem> items, int maxEvents = int.MaxValue)
    {
        var events = new List<EventRecord>();
        var scan = Scan(items, events.Add, maxEvents);
        return new(events, scan.Errors, scan.Count, scan.BadItems, scan.Fatal, scan.TooManyEvents);
    }

    /// <summary>Reads a document event by event without keeping it: <paramref name="onEvent"/> receives each good
    /// event in document order until the first bad one; after that only problems are collected (at most
    /// <see cref="MaxReportedErrors"/>) so the count is right. Stops at <paramref name="maxEvents"/> + 1 events.
    /// </summary>
    public static CatalogScan Scan(IEnumerable<EventItem> items, Action<EventRecord> onEvent, int maxEvents = int.MaxValue)
    {
        var errors = new List<FormatError>();
        int count = 0, bad = 0;
        try
        {
            foreach (var item in items)
            {
                if (++count > maxEvents) return new(errors, count, bad, null, true);
                if (item.Event is { } e)
                {
                    if (bad == 0) onEvent(e);
                }
                else
                {
                    bad++;
                    foreach (var error in item.Errors)
                    {
                        if (errors.Count < MaxReportedErrors) errors.Add(error);
                    }
                }
            }
        }
        catch (CatalogFormatException e)
        {
            return new(errors, count, bad, e.ToError(), false);
        }
        if (count == 0) errors.Add(new FormatError(null, "", "the document holds no events", 0, 0));
        return new(errors, count, bad, null, false);
    }
}
