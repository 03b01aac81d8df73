using System.Globalization;
using Forecast.Core.Events;

namespace Forecast.Formats;

/// <summary>The raw text of one event's fields with where each was found, checked into an
/// <see cref="EventRecord"/> with <see cref="EventRules"/>, the same limits as the JSON ingest.</summary>
sealed class EventFields(int index)
{
    /// <summary>Stored when a document gives no depth: optional in QuakeML 1.2 and FDSN text, required by the
    /// store. 0 km is what the CSV reader of <c>forecast fit</c> assumes too.</summary>
    public const double UnknownDepthKm = 0;

    /// <summary>Stored when a document gives no magnitude type: "M", the generic magnitude (common practice).
    /// </summary>
    public const string UnknownMagnitudeType = "M";

    public readonly List<FormatError> Errors = [];
    public int Index { get; } = index;

    public void Add(string field, string message, long line, long position = 0) =>
        Errors.Add(new FormatError(Index, field, message, line, position));

    public string? Text(Located? value, string field, Func<string?, string?> check, long fallbackLine)
    {
        var text = value?.Text.Trim();
        if (check(text) is { } why)
        {
            Add(field, why, value?.Line ?? fallbackLine, value?.Position ?? 0);
            return null;
        }
        return text;
    }

    public double? Number(Located? value, string field, Func<double, string?> check, long fallbackLine,
        int powerOfTen = 0, bool required = true, double fallback = 0)
    {
        if (value is null || value.Text.Trim().Length == 0)
        {
            if (!required) return fallback;
            Add(field, "is required", value?.Line ?? fallbackLine, value?.Position ?? 0);
            return null;
        }
        var text = value.Text.Trim();
        if (text.Length > 64 || !DecimalText.TryParse(text, powerOfTen, out var v))
        {
            Add(field, "must be a number such as 12.5 (invariant culture, '.' as decimal point)", value.Line,
                value.Position);
            return null;
        }
        if (check(v) is { } why)
        {
            Add(field, why, value.Line, value.Position);
            return null;
        }
        return v;
    }

    public DateTime? Time(Located? value, string field, DateTime nowUtc, long fallbackLine)
    {
        if (value is null || value.Text.Trim().Length == 0)
        {
            Add(field, "is required", value?.Line ?? fallbackLine, value?.Position ?? 0);
            return null;
        }
        if (IsoTime.Parse(value.Text) is not { } t)
        {
            Add(field, "must be an ISO 8601 UTC time such as 2026-03-04T05:06:07.891234Z", value.Line, value.Position);
            return null;
        }
        if (EventRules.CheckTime(t, nowUtc) is { } why)
        {
            Add(field, why, value.Line, value.Position);
            return null;
        }
        return t;
    }
}

/// <summary>A field's text and where it starts.</summary>
sealed record Located(string Text, long Line, long Position);

/// <summary>ISO 8601 times in UTC, to the microsecond PostgreSQL keeps.</summary>
public static class IsoTime
{
    /// <summary>The form every writer uses: <c>2026-03-04T05:06:07.891234Z</c>.</summary>
    public const string Format = "yyyy-MM-dd'T'HH:mm:ss.ffffff'Z'";

    public static string Write(DateTime utc) => utc.ToString(Format, CultureInfo.InvariantCulture);

    /// <summary>Reads <c>yyyy-MM-ddTHH:mm:ss[.f…][Z|±hh:mm]</c>; no designator means UTC, as both QuakeML and
    /// the FDSN specification define their times. A space for the 'T' is tolerated (seen in FDSN text).
    /// The value is truncated to whole microseconds, as the JSON ingest does, so re-posts compare equal.</summary>
    public static DateTime? Parse(string? text)
    {
        if (text is null) return null;
        var t = text.Trim();
        if (t.Length is < 19 or > 40 || t[4] != '-' || t[7] != '-' || (t[10] != 'T' && t[10] != 't' && t[10] != ' ')
            || t[13] != ':' || t[16] != ':')
        {
            return null;
        }
        if (t[10] == ' ') t = string.Concat(t.AsSpan(0, 10), "T", t.AsSpan(11));
        if (!DateTimeOffset.TryParse(t, CultureInfo.InvariantCulture,
                DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal, out var dto))
        {
            return null;
        }
        var utc = dto.UtcDateTime;
        return new DateTime(utc.Ticks - utc.Ticks % 10, DateTimeKind.Utc);
    }
}
