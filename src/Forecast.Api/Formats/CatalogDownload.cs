using System.Text;
using Forecast.Api.Infrastructure;
using Forecast.Formats;
using Forecast.Storage.Events;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.WebUtilities;

namespace Forecast.Api.Formats;

/// <summary>Writes one page of the catalog query as QuakeML 1.2 or FDSN text.</summary>
/// <remarks>A page holds at most 1,000 events, so it is written to memory first (about 1 kB per QuakeML event):
/// the writers are synchronous and an error can still be answered as a problem. The next page's URL goes in a
/// <c>Link: &lt;…&gt;; rel="next"</c> header (RFC 8288), the place the JSON body's <c>next</c> has no room for.
/// </remarks>
public static class CatalogDownload
{
    public static Results<FileContentHttpResult, ProblemHttpResult> Write(
        HttpContext http, IReadOnlyList<EventRow> rows, CatalogFormat format, string mediaType, string? nextCursor)
    {
        if (nextCursor is not null)
        {
            var query = http.Request.Query.Where(q => q.Key != "cursor")
                .SelectMany(q => q.Value.Select(v => new KeyValuePair<string, string?>(q.Key, v)))
                .Append(new KeyValuePair<string, string?>("cursor", nextCursor));
            http.Response.Headers.Link = $"<{QueryHelpers.AddQueryString(http.Request.Path, query)}>; rel=\"next\"";
        }
        return Write(rows.Select(ToRecord).ToList(), format, mediaType);
    }

    /// <summary>Writes <paramref name="records"/> whole, as QuakeML 1.2 or FDSN text; a problem when an event
    /// cannot be written as FDSN text.</summary>
    public static Results<FileContentHttpResult, ProblemHttpResult> Write(
        IReadOnlyList<EventRecord> records, CatalogFormat format, string mediaType)
    {
        using var buffer = new MemoryStream();
        if (format == CatalogFormat.QuakeMl)
        {
            QuakeMlWriter.Write(buffer, records);
        }
        else
        {
            foreach (var r in records)
            {
                if (FdsnText.CannotWrite(r) is { } why)
                {
                    return Problems.BadRequest("not-representable", "The events cannot be written in this format",
                        $"Event {r.Source}/{r.Id} cannot be written as FDSN text: {why}. Ask for QuakeML or JSON.");
                }
            }
            using var text = new StreamWriter(buffer, new UTF8Encoding(false), leaveOpen: true);
            FdsnText.Write(text, records);
        }
        return TypedResults.File(buffer.ToArray(), mediaType + "; charset=utf-8");
    }

    public static EventRecord ToRecord(EventRow r) => new(r.Source, r.EventId, r.OriginTime, r.Latitude,
        r.Longitude, r.DepthKm, r.Magnitude, r.MagnitudeType, r.Status);
}
