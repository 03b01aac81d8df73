namespace Forecast.Core.Events;

/// <summary>The limits every accepted event obeys, whatever format it arrived in.</summary>
/// <remarks>
/// Ranges are common practice for earthquake catalogs: depth -10 km allows locations above sea level
/// datum, 800 km is below the deepest known seismicity, and magnitudes -2 to 10 cover microseismicity to
/// the largest possible events. An origin time more than five minutes in the future is a clock error.
/// </remarks>
public static class EventRules
{
    public const double MinLatitude = -90, MaxLatitude = 90;
    public const double MinLongitude = -180, MaxLongitude = 180;
    public const double MinDepthKm = -10, MaxDepthKm = 800;
    public const double MinMagnitude = -2, MaxMagnitude = 10;
    public const int MaxSourceLength = 32;
    public const int MaxIdLength = 200;
    public const int MaxMagnitudeTypeLength = 16;
    public static readonly TimeSpan MaxFutureSkew = TimeSpan.FromMinutes(5);

    /// <summary>Event states a feed may send; <c>deleted</c> retracts the event (kept, but hidden from fits).</summary>
    public static readonly IReadOnlyList<string> Statuses = ["automatic", "reviewed", "deleted"];

    /// <summary>Why <paramref name="value"/> is not an acceptable source code, or null when it is.</summary>
    /// <remarks>Network and agency codes: letters, digits, '.', '_' and '-'.</remarks>
    public static string? CheckSource(string? value)
    {
        if (string.IsNullOrEmpty(value)) return "is required";
        if (value.Length > MaxSourceLength) return $"must be at most {MaxSourceLength} characters";
        foreach (var ch in value)
        {
            if (!(char.IsAsciiLetterOrDigit(ch) || ch is '.' or '_' or '-'))
                return "may contain only letters, digits, '.', '_' and '-'";
        }
        return null;
    }

    /// <summary>Why <paramref name="value"/> is not an acceptable event id, or null when it is.</summary>
    /// <remarks>Ids are printable text without spaces (QuakeML publicIDs such as <c>smi:net/event/1</c> qualify);
    /// control characters and "." or ".." path segments are refused so an id can never steer a URL or a path.</remarks>
    public static string? CheckId(string? value)
    {
        if (string.IsNullOrEmpty(value)) return "is required";
        if (value.Length > MaxIdLength) return $"must be at most {MaxIdLength} characters";
        foreach (var ch in value)
        {
            if (char.IsControl(ch) || char.IsWhiteSpace(ch) || char.IsSurrogate(ch) || ch == '\\')
                return "must be printable text without spaces, backslashes or control characters";
        }
        foreach (var segment in value.Split('/'))
        {
            if (segment is "." or "..") return "must not contain '.' or '..' path segments";
        }
        return null;
    }

    /// <summary>Why <paramref name="value"/> is not an acceptable magnitude type (ML, Mw, mb, ...), or null.</summary>
    public static string? CheckMagnitudeType(string? value)
    {
        if (string.IsNullOrEmpty(value)) return "is required";
        if (value.Length > MaxMagnitudeTypeLength) return $"must be at most {MaxMagnitudeTypeLength} characters";
        foreach (var ch in value)
        {
            if (!(char.IsAsciiLetterOrDigit(ch) || ch is '_' or '-' or '(' or ')'))
                return "may contain only letters, digits, '_', '-' and parentheses";
        }
        return null;
    }

    public static string? CheckStatus(string? value) =>
        value is not null && Statuses.Contains(value) ? null : "must be one of: automatic, reviewed, deleted";

    public static string? CheckLatitude(double v) => CheckRange(v, MinLatitude, MaxLatitude, "degrees");
    public static string? CheckLongitude(double v) => CheckRange(v, MinLongitude, MaxLongitude, "degrees");
    public static string? CheckDepthKm(double v) => CheckRange(v, MinDepthKm, MaxDepthKm, "km");
    public static string? CheckMagnitude(double v) => CheckRange(v, MinMagnitude, MaxMagnitude, "");

    /// <summary>Why an origin time is not acceptable given the current time, or null.</summary>
    public static string? CheckTime(DateTime timeUtc, DateTime nowUtc) =>
        timeUtc > nowUtc + MaxFutureSkew ? "must not be more than 5 minutes in the future" : null;

    static string? CheckRange(double v, double min, double max, string unit)
    {
        if (!double.IsFinite(v)) return "must be a finite number";
        var u = unit.Length > 0 ? " " + unit : "";
        return v < min || v > max
            ? string.Create(System.Globalization.CultureInfo.InvariantCulture, $"must be between {min} and {max}{u}")
            : null;
    }
}
