using Forecast.Api.Events;
using Forecast.Api.Infrastructure;
using Forecast.Core.Events;
using Forecast.Formats;
using Forecast.Storage.Events;
using Microsoft.AspNetCore.Http.Features;
using Microsoft.AspNetCore.Http.HttpResults;

namespace Forecast.Api.Formats;

/// <summary>Streams a QuakeML or FDSN text body, event by event, into an all-or-nothing <see cref="EventBatch"/>:
/// checked with the same rules as the JSON ingest, and refused whole with problem details when any event is bad.
/// </summary>
/// <remarks>Memory does not grow with the document: at most <see cref="PipeBytes"/> of the body waits for the
/// reader, which yields one event at a time, and each checked event goes straight to the database's staging
/// table. A bad event stops the staging; the rest of the document is still read for its problems, and the batch is
/// rolled back.</remarks>
public static class CatalogUpload
{
    /// <summary>At most this much of the body waits in memory for the reader.</summary>
    const int PipeBytes = 1024 * 1024;

    /// <summary>Copies the body into the reader's pipe and, once the reader has stopped (a fatal problem, or too many
    /// events), reads the rest of the body and drops it, so the client finishes sending and gets the answer on a
    /// connection that stays usable.</summary>
    /// <remarks>Kestrel would drain an unread body after the answer too, but PipeReader.CopyToAsync into a pipe whose
    /// reader completed on another thread sometimes left Kestrel's body reader broken (ArgumentOutOfRangeException in
    /// AdvanceTo, then "reading is already in progress" in the drain), and the connection was reset while the client was
    /// still sending. The body is bounded by the size limit set above, so the drain is bounded too.</remarks>
    static async Task ForwardAsync(System.IO.Pipelines.PipeReader body, System.IO.Pipelines.PipeWriter into,
        CancellationToken ct)
    {
        var forwarding = true;
        while (true)
        {
            var result = await body.ReadAsync(ct);
            var buffer = result.Buffer;
            if (forwarding)
            {
                foreach (var segment in buffer)
                {
                    var flushed = await into.WriteAsync(segment, ct);
                    if (!flushed.IsCompleted) continue;
                    forwarding = false;
                    break;
                }
            }
            body.AdvanceTo(buffer.End);
            if (result.IsCompleted) return;
        }
    }

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
        var options = new CatalogReadOptions
        {
            NowUtc = nowUtc, Source = source, Status = status, MaxCharacters = limit,
        };
        var name = format == CatalogFormat.QuakeMl ? "QuakeML" : "FDSN text";

        // The body flows through a bounded pipe to a reader on its own thread, so the document is read while it is
        // still arriving and never held whole: the readers are synchronous (XmlReader), and blocking on the pipe
        // belongs on a thread of its own, not on Kestrel's or the pool's.
        var batch = await store.BeginBatchAsync(ct);
        var pipe = new System.IO.Pipelines.Pipe(new System.IO.Pipelines.PipeOptions(
            pauseWriterThreshold: PipeBytes, resumeWriterThreshold: PipeBytes / 2));
        var reading = Task.Factory.StartNew(() =>
        {
            using var input = pipe.Reader.AsStream();
            try
            {
                var items = format == CatalogFormat.QuakeMl
                    ? QuakeMl.ReadEvents(input, options)
                    : FdsnText.ReadEvents(input, options);
                return CatalogReader.Scan(items, e => batch.Add(ToInput(e)), limits.MaxEventsPerPost);
            }
            finally
            {
                pipe.Reader.Complete();   // a reader that stopped early releases the upload
            }
        }, CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default);

        Exception? upload = null;
        try
        {
            await ForwardAsync(request.BodyReader, pipe.Writer, ct);
        }
        catch (Exception e)
        {
            upload = e;
        }
        await pipe.Writer.CompleteAsync(upload is null ? null : new IOException("The upload ended early.", upload));
        CatalogScan scan;
        try
        {
            scan = await reading;
        }
        catch when (upload is not null)
        {
            scan = null!;   // the reader failed because the upload did; the upload's failure is the answer
        }
        catch
        {
            await batch.DisposeAsync();
            throw;
        }
        if (upload is not null)
        {
            await batch.DisposeAsync();
            if (upload is BadHttpRequestException { StatusCode: StatusCodes.Status413PayloadTooLarge })
                return new(null, null, Problems.TooLarge(limit));
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(upload);
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

/// <summary>The slots of <see cref="IngestOptions.MaxConcurrentCatalogUploads"/>.</summary>
public sealed class CatalogUploadSlots(Microsoft.Extensions.Options.IOptions<IngestOptions> options) : IDisposable
{
    readonly SemaphoreSlim _slots = new(options.Value.MaxConcurrentCatalogUploads);

    /// <summary>Takes a slot if one is free, without waiting.</summary>
    public bool TryEnter() => _slots.Wait(0);

    public void Release() => _slots.Release();

    public void Dispose() => _slots.Dispose();
}
