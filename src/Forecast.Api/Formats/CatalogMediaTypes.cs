using Forecast.Formats;
using Microsoft.Extensions.Primitives;
using Microsoft.Net.Http.Headers;

namespace Forecast.Api.Formats;

public enum CatalogFormat { Json, QuakeMl, FdsnText }

/// <summary>Which event format a request body is, and which an <c>Accept</c> header asks for.</summary>
public static class CatalogMediaTypes
{
    public const string Uploads =
        "application/json, application/vnd.quakeml+xml (or application/xml, text/xml) for QuakeML 1.2, " +
        "or text/plain for FDSN event text";

    static readonly string[] QuakeMlTypes = [FormatNames.QuakeMl, "application/xml", "text/xml"];

    public static CatalogFormat? ForUpload(string? contentType)
    {
        if (contentType is null || !MediaTypeHeaderValue.TryParse(contentType, out var m)) return null;
        var type = m.MediaType.Value ?? "";
        if (type.Equals("application/json", StringComparison.OrdinalIgnoreCase)
            || type.EndsWith("+json", StringComparison.OrdinalIgnoreCase))
        {
            return CatalogFormat.Json;
        }
        if (QuakeMlTypes.Contains(type, StringComparer.OrdinalIgnoreCase)) return CatalogFormat.QuakeMl;
        if (type.Equals(FormatNames.FdsnText, StringComparison.OrdinalIgnoreCase)) return CatalogFormat.FdsnText;
        return null;
    }

    /// <summary>The client's most preferred format we write, by <c>q</c> then order (RFC 9110, 12.5.1); JSON when
    /// the header is absent, says <c>*/*</c>, or names nothing we write. The media type answered is the one the
    /// client named (a client asking for <c>text/xml</c> gets <c>text/xml</c>).</summary>
    public static (CatalogFormat Format, string MediaType) ForDownload(StringValues accept)
    {
        if (accept.Count == 0 || !MediaTypeHeaderValue.TryParseList(accept, out var list))
            return (CatalogFormat.Json, "application/json");
        foreach (var m in list.OrderByDescending(m => m.Quality ?? 1.0))
        {
            if (m.Quality is 0) continue;
            var type = m.MediaType.Value ?? "";
            if (type is "*/*" or "application/*" || type.Equals("application/json", StringComparison.OrdinalIgnoreCase))
                return (CatalogFormat.Json, "application/json");
            if (QuakeMlTypes.FirstOrDefault(t => t.Equals(type, StringComparison.OrdinalIgnoreCase)) is { } xml)
                return (CatalogFormat.QuakeMl, xml);
            if (type.Equals(FormatNames.FdsnText, StringComparison.OrdinalIgnoreCase))
                return (CatalogFormat.FdsnText, FormatNames.FdsnText);
        }
        return (CatalogFormat.Json, "application/json");
    }
}
