using Forecast.Api.Events;
using Forecast.Api.Infrastructure;
using Forecast.Core.Events;
using Forecast.Formats;
using Forecast.Storage.Events;
using Microsoft.AspNetCore.Http.Features;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.WebUtilities;

namespace Forecast.Api.Formats;

/// <summary>Streams a QuakeML or FDSN text body, event by event, into an all-or-nothing <see cref="EventBatch"/>:
/// checked with the same rules as the JSON ingest, and refused whole with problem details when any event is bad.
/// </summary>
/// <remarks>Memory does not grow with the document: the body goes to a temporary file once it passes
/// <see cref="MemoryBufferBytes"/> (the readers are synchronous, and Kestrel allows no synchronous reads of the
/// request itself), the reader yields one event at a time, and each checked event goes straight to the
/// database's staging table. A bad event stops the staging; the rest of the document is still read for its
/// problems, and the batch is rolled back.</remarks>
public static class CatalogUpload
{
    const int MemoryBufferBytes = 1024 * 1024;

    /// <summary>A batch staged from a good document (commit it), or the problem that refuses the document.</summary>
    public sealed record Staged(EventBatch? Batch, ValidationProblem? Invalid, ProblemHttpResult? Problem);

    public static async Task<Staged> StageAsync(HttpRequest request, CatalogFormat format, string? source,
        string? status, IngestOptions limits, DateTime nowUtc, EventStore store, CancellationToken ct)
    {
        var errors = new Dictionary<string, string[]>();
        if (source is not null && EventRules.CheckSource(source) is { } badSource) errors["source"] = [badSource];
        if (status is not null && format != CatalogFormat.FdsnText)
            errors["status"] = ["applies to FDSN text only; QuakeML gives each origin's evaluation mode and status"];
        else if (status is not null && status is not ("automatic" or "reviewed"))
            errors["status"] = ["must be automatic or reviewed"];
        if (errors.Count > 0) return new(null, Problems.Invalid(errors, "Some query parameters are not valid."), null);

        var limit = limits.MaxCatalogBodyBytes;
        if (request.ContentLength > limit) return new(null, null, Problems.TooLarge(limit));
        if (request.HttpContext.Features.Get<IHttpMaxRequestBodySizeFeature>() is { IsReadOnly: false } size)
            size.MaxRequestBodySize = limit;
        request.EnableBuffering(MemoryBufferBytes, limit);
        try
        {
            await request.Body.DrainAsync(ct);
        }
        catch (BadHttpRequestException e) when (e.StatusCode == StatusCodes.Status413PayloadTooLarge)
        {
            return new(null, null, Problems.TooLarge(limit));
        }
        catch (IOException) when (!ct.IsCancellationRequested)
        {
            // FileBufferingReadStream's "buffer limit exceeded".
            return new(null, null, Problems.TooLarge(limit));
        }
        request.Body.Position = 0;

        var options = new CatalogReadOptions
        {
            NowUtc = nowUtc, Source = source, Status = status, MaxCharacters = limit,
        };
        var items = format == CatalogFormat.QuakeMl
            ? QuakeMl.ReadEvents(request.Body, options)
            : FdsnText.ReadEvents(request.Body, options);
        var name = format == CatalogFormat.QuakeMl ? "QuakeML" : "FDSN text";

        var batch = await store.BeginBatchAsync(ct);
        CatalogScan scan;
        try
        {
            scan = CatalogReader.Scan(items, e => batch.Add(ToInput(e)), limits.MaxEventsPerPost);
        }
        catch
        {
            await batch.DisposeAsync();
            throw;
        }
        if (scan.IsValid) return new(batch, null, null);
        await batch.DisposeAsync();

        if (scan.TooManyEvents)
        {
            return new(null, null, Problems.BadRequest("batch-too-large", "Too many events in one request",
                $"Send at most {limits.MaxEventsPerPost} events per request; this {name} document has more."));
        }
        if (scan.Fatal is { } fatal)
            return new(null, null, Problems.Malformed($"The {name} document cannot be read: {fatal.Text}."));

        foreach (var e in scan.Errors)
            errors[e.Key] = errors.TryGetValue(e.Key, out var old) ? [.. old, e.Text] : [e.Text];
        var detail = scan.Count == 0
            ? $"The {name} document holds no events; nothing was stored."
            : $"{Math.Max(scan.BadItems, 1)} of {scan.Count} events of the {name} document are not valid " +
              "(keys give the event's 0-based index, messages its line); nothing was stored.";
        if (scan.Errors.Count >= CatalogReader.MaxReportedErrors)
            detail += $" Only the first {CatalogReader.MaxReportedErrors} problems are listed.";
        return new(null, Problems.Invalid(errors, detail), null);
    }

    static EventInput ToInput(EventRecord e) => new(e.Source, e.Id, e.TimeUtc, e.Latitude, e.Longitude, e.DepthKm,
        e.Magnitude, e.MagnitudeType, e.Status);
}
