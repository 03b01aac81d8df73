using System.Globalization;
using System.Text.Json;
using Forecast.Core.Events;
using Forecast.Storage.Events;

namespace Forecast.Api.Events;

/// <summary>Reads the JSON event format (one object or an array of them) and checks every field.</summary>
/// <remarks>
/// The document is walked by hand rather than deserialised so that every bad item and field is reported at once,
/// keyed like <c>[3].latitude</c>, instead of stopping at the first.
/// </remarks>
public static class EventJson
{
    public const int MaxReportedErrors = 200;

    static readonly string[] Known =
        ["id", "source", "time", "latitude", "longitude", "depthKm", "magnitude", "magnitudeType", "status"];

    /// <summary><see cref="Known"/> as UTF-8, to compare with a property's name without making a string of it.
    /// </summary>
    static readonly byte[][] KnownUtf8 = [.. Known.Select(System.Text.Encoding.UTF8.GetBytes)];

    /// <summary>What reading a body found: the items it holds, their problems keyed like <c>[3].latitude</c>, and
    /// how many items were bad.</summary>
    public sealed record Parsed(int Count, Dictionary<string, string[]> Errors, bool IsArray, int BadItems);

    /// <summary>Checks every item of <paramref name="root"/> (one event object or an array of them) and hands each
    /// good one to <paramref name="accept"/>, in order, until the first bad one: from then on the body is only
    /// read for its problems. No event is kept here, so a large batch leaves nothing behind for the collector but
    /// what <paramref name="accept"/> keeps.</summary>
    public static Parsed Read(JsonElement root, DateTime nowUtc, Action<EventInput> accept)
    {
        var errors = new Dictionary<string, string[]>();
        if (root.ValueKind == JsonValueKind.Array)
        {
            int i = 0, bad = 0;
            foreach (var item in root.EnumerateArray())
            {
                if (ReadOne(item, $"[{i}].", nowUtc, errors) is not { } e) bad++;
                else if (bad == 0) accept(e);
                i++;
            }
            if (i == 0) Add(errors, "", "the array holds no events");
            return new Parsed(i, errors, true, bad);
        }
        var single = ReadOne(root, "", nowUtc, errors);
        if (single is not null) accept(single);
        return new Parsed(1, errors, false, single is null ? 1 : 0);
    }

    static EventInput? ReadOne(JsonElement item, string at, DateTime nowUtc, Dictionary<string, string[]> errors)
    {
        if (item.ValueKind != JsonValueKind.Object)
        {
            Add(errors, at.TrimEnd('.'), "must be an event object");
            return null;
        }
        try
        {
            return ReadFields(item, at, nowUtc, errors);
        }
        catch (InvalidOperationException e) when (e.InnerException is System.Text.DecoderFallbackException)
        {
            // JsonDocument checks the structure but leaves string contents as bytes; invalid UTF-8 (RFC 3629, 3)
            // shows only when a name or value is read as text.
            Add(errors, at.TrimEnd('.'), "holds text that is not valid UTF-8 (RFC 8259, 8.1; RFC 3629, 3)");
            return null;
        }
        catch (InvalidOperationException e) when (e.Message.Contains("UTF-16", StringComparison.Ordinal))
        {
            // An escape of half a surrogate pair (\uD800 alone) names no character (RFC 8259, 8.2).
            Add(errors, at.TrimEnd('.'), "holds an escape of an unpaired surrogate (RFC 8259, 8.2), which is no character");
            return null;
        }
    }

    static EventInput? ReadFields(JsonElement item, string at, DateTime nowUtc, Dictionary<string, string[]> errors)
    {
        var before = errors.Count;
        var seen = 0;   // a bit per known field
        foreach (var property in item.EnumerateObject())
        {
            var k = KnownIndex(property);
            if (k < 0) Add(errors, at + property.Name, "is not a known field");
            else if ((seen & (1 << k)) != 0) Add(errors, at + Known[k], "appears more than once");
            else seen |= 1 << k;
        }

        var id = Text(item, "id", at, errors, EventRules.CheckId);
        var source = Text(item, "source", at, errors, EventRules.CheckSource);
        var magnitudeType = Text(item, "magnitudeType", at, errors, EventRules.CheckMagnitudeType);
        var status = item.TryGetProperty("status", out _)
            ? Text(item, "status", at, errors, EventRules.CheckStatus)
            : "automatic";
        var time = Time(item, at, nowUtc, errors);
        var latitude = Number(item, "latitude", at, errors, EventRules.CheckLatitude);
        var longitude = Number(item, "longitude", at, errors, EventRules.CheckLongitude);
        var depthKm = Number(item, "depthKm", at, errors, EventRules.CheckDepthKm);
        var magnitude = Number(item, "magnitude", at, errors, EventRules.CheckMagnitude);

        if (errors.Count > before) return null;
        return new EventInput(source!, id!, time!.Value, latitude!.Value, longitude!.Value, depthKm!.Value,
            magnitude!.Value, magnitudeType!, status!);
    }

    static int KnownIndex(JsonProperty property)
    {
        for (var k = 0; k < KnownUtf8.Length; k++)
            if (property.NameEquals(KnownUtf8[k])) return k;
        return -1;
    }

    static string? Text(JsonElement item, string name, string at, Dictionary<string, string[]> errors,
        Func<string?, string?> check)
    {
        if (!item.TryGetProperty(name, out var v) || v.ValueKind == JsonValueKind.Null)
        {
            Add(errors, at + name, "is required");
            return null;
        }
        if (v.ValueKind != JsonValueKind.String)
        {
            Add(errors, at + name, "must be a string");
            return null;
        }
        var s = v.GetString();
        if (check(s) is { } why)
        {
            Add(errors, at + name, why);
            return null;
        }
        return s;
    }

    static double? Number(JsonElement item, string name, string at, Dictionary<string, string[]> errors,
        Func<double, string?> check)
    {
        if (!item.TryGetProperty(name, out var v) || v.ValueKind == JsonValueKind.Null)
        {
            Add(errors, at + name, "is required");
            return null;
        }
        if (v.ValueKind != JsonValueKind.Number)
        {
            Add(errors, at + name, "must be a number (NaN and Infinity are not numbers in JSON)");
            return null;
        }
        if (!v.TryGetDouble(out var d) || !double.IsFinite(d))
        {
            Add(errors, at + name, "must be a finite number");
            return null;
        }
        if (check(d) is { } why)
        {
            Add(errors, at + name, why);
            return null;
        }
        return d;
    }

    static DateTime? Time(JsonElement item, string at, DateTime nowUtc, Dictionary<string, string[]> errors)
    {
        const string name = "time";
        if (!item.TryGetProperty(name, out var v) || v.ValueKind != JsonValueKind.String)
        {
            Add(errors, at + name, v.ValueKind == JsonValueKind.Undefined || v.ValueKind == JsonValueKind.Null
                ? "is required"
                : "must be an ISO 8601 string");
            return null;
        }
        var utc = ParseUtc(v.GetString());
        if (utc is null)
        {
            Add(errors, at + name, "must be an ISO 8601 time with 'Z' or an offset, e.g. 2026-03-04T05:06:07.8Z");
            return null;
        }
        if (EventRules.CheckTime(utc.Value, nowUtc) is { } why)
        {
            Add(errors, at + name, why);
            return null;
        }
        return utc;
    }

    /// <summary>Parses an ISO 8601 time that names its offset; a time without one is ambiguous and refused.</summary>
    /// <remarks>PostgreSQL keeps microseconds, so the value is truncated to whole microseconds here: a re-post of
    /// the same text then compares equal to what was stored.</remarks>
    public static DateTime? ParseUtc(string? text)
    {
        if (string.IsNullOrWhiteSpace(text) || text.Length > 40) return null;
        var t = text.Trim();
        var hasOffset = t.EndsWith('Z') || t.EndsWith('z')
            || (t.Length > 6 && (t[^6] == '+' || t[^6] == '-') && t[^3] == ':');
        if (!hasOffset || t.IndexOf('T', StringComparison.OrdinalIgnoreCase) < 0) return null;
        if (!DateTimeOffset.TryParse(t, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal, out var dto))
            return null;
        var utc = dto.UtcDateTime;
        return new DateTime(utc.Ticks - utc.Ticks % 10, DateTimeKind.Utc);
    }

    static void Add(Dictionary<string, string[]> errors, string key, string message)
    {
        if (errors.Count >= MaxReportedErrors && !errors.ContainsKey(key)) return;
        errors[key] = errors.TryGetValue(key, out var old) ? [.. old, message] : [message];
    }
}
