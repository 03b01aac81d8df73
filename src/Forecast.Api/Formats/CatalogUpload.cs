using Forecast.Api.Events;
using Forecast.Api.Infrastructure;
using Forecast.Core.Events;
using Forecast.Formats;
using Forecast.Storage.Events;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.AspNetCore.WebUtilities;

namespace Forecast.Api.Formats;

/// <summary>Reads a QuakeML or FDSN text body into the same checked <see cref="EventInput"/> list the JSON ingest
/// produces, or the problem that refuses it whole.</summary>
public static class CatalogUpload
{
    /// <summary>Bodies up to this size are buffered in memory, larger ones in a temporary file: the readers are
    /// synchronous (XmlReader) and Kestrel allows no synchronous reads of the request itself.</summary>
    const int MemoryBufferBytes = 1024 * 1024;

    public sealed record Read(IReadOnlyList<EventInput>? Events, ValidationProblem? Invalid, ProblemHttpResult? Problem);

    public static async Task<Read> ReadAsync(HttpRequest request, CatalogFormat format, string? source,
        string? status, IngestOptions limits, DateTime nowUtc, CancellationToken ct)
    {
        var errors = new Dictionary<string, string[]>();
        if (source is not null && EventRules.CheckSource(source) is { } badSource) errors["source"] = [badSource];
        if (status is not null && format != CatalogFormat.FdsnText)
            errors["status"] = ["applies to FDSN text only; QuakeML gives each origin's evaluation mode and status"];
        else if (status is not null && status is not ("automatic" or "reviewed"))
            errors["status"] = ["must be automatic or reviewed"];
        if (errors.Count > 0) return new(null, Problems.Invalid(errors, "Some query parameters are not valid."), null);

        request.EnableBuffering(MemoryBufferBytes, limits.MaxBodyBytes);
        try
        {
            await request.Body.DrainAsync(ct);
        }
        catch (BadHttpRequestException e) when (e.StatusCode == StatusCodes.Status413PayloadTooLarge)
        {
            return new(null, null, Problems.TooLarge(limits.MaxBodyBytes));
        }
        catch (IOException) when (!ct.IsCancellationRequested)
        {
            // FileBufferingReadStream's "buffer limit exceeded".
            return new(null, null, Problems.TooLarge(limits.MaxBodyBytes));
        }
        request.Body.Position = 0;

        var options = new CatalogReadOptions
        {
            NowUtc = nowUtc, Source = source, Status = status, MaxCharacters = limits.MaxBodyBytes,
        };
        var items = format == CatalogFormat.QuakeMl
            ? QuakeMl.ReadEvents(request.Body, options)
            : FdsnText.ReadEvents(request.Body, options);
        var result = CatalogReader.ReadAll(items, limits.MaxEventsPerPost);
        var name = format == CatalogFormat.QuakeMl ? "QuakeML" : "FDSN text";

        if (result.TooManyEvents)
        {
            return new(null, null, Problems.BadRequest("batch-too-large", "Too many events in one request",
                $"Send at most {limits.MaxEventsPerPost} events per request; this {name} document has more."));
        }
        if (result.Fatal is { } fatal)
            return new(null, null, Problems.Malformed($"The {name} document cannot be read: {fatal.Text}."));

        var events = result.Errors.Count == 0 ? result.Events.Select(ToInput).ToList() : [];
        foreach (var e in result.Errors)
            errors[e.Key] = errors.TryGetValue(e.Key, out var old) ? [.. old, e.Text] : [e.Text];
        if (errors.Count == 0) EventEndpoints.AddDuplicateErrors(events, errors);
        if (errors.Count > 0)
        {
            var detail = result.Count == 0
                ? $"The {name} document holds no events; nothing was stored."
                : $"{Math.Max(result.BadItems, 1)} of {result.Count} events of the {name} document are not valid " +
                  "(keys give the event's 0-based index, messages its line); nothing was stored.";
            if (result.Errors.Count >= CatalogReader.MaxReportedErrors)
                detail += $" Only the first {CatalogReader.MaxReportedErrors} problems are listed.";
            return new(null, Problems.Invalid(errors, detail), null);
        }
        return new(events, null, null);
    }

    static EventInput ToInput(EventRecord e) => new(e.Source, e.Id, e.TimeUtc, e.Latitude, e.Longitude, e.DepthKm,
        e.Magnitude, e.MagnitudeType, e.Status);
}
