using System.Globalization;
using System.Text;
using System.Text.Json;
using Forecast.Api.Auth;
using Forecast.Api.Formats;
using Forecast.Api.Infrastructure;
using Forecast.Storage.Events;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Events;

public static class EventEndpoints
{
    const int ItemsListedUpTo = 1_000;
    const int MaxPageSize = 1_000;
    /// <summary>Batches of more events than this are checked and staged on a thread of their own.</summary>
    const int OwnThreadAbove = 1_000;

    public static RouteGroupBuilder MapEvents(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/v1/events").WithTags("Events");
        group.MapPost("/", PostEvents).WithName("PostEvents").RequireAuthorization(Policies.Feeder)
            .Accepts<EventSubmission>("application/json", Forecast.Formats.FormatNames.QuakeMl, "application/xml",
                "text/xml", Forecast.Formats.FormatNames.FdsnText)
            .WithSummary("Submit one event or an array of events (all or nothing; idempotent; revisions kept)")
            .WithDescription("JSON, QuakeML 1.2 (application/vnd.quakeml+xml, application/xml, text/xml) or FDSN " +
                "event text (text/plain). For QuakeML and FDSN text, 'source' overrides the source of every event " +
                "and 'status' (FDSN text only: automatic or reviewed) is the state of events not retracted.");
        group.MapGet("/", QueryEvents).WithName("QueryEvents").RequireAuthorization()
            .WithSummary("Events in time order, filtered by time, magnitude, box or radius; paged by cursor")
            .WithDescription("JSON by default; QuakeML 1.2 for Accept: application/vnd.quakeml+xml (or " +
                "application/xml, text/xml), FDSN event text for Accept: text/plain, with the next page in a Link header.");
        group.MapGet("/{source}/{**id}", GetEvent).WithName("GetEvent").RequireAuthorization()
            .WithSummary("One event with its revision history");
        return group;
    }

    static async Task<Results<Created<EventWriteResult>, Ok<EventWriteResult>, Ok<BatchWriteResult>,
        ValidationProblem, ProblemHttpResult>> PostEvents(
        HttpRequest request, EventStore store, IOptions<IngestOptions> options, TimeProvider clock,
        ILoggerFactory logs, CatalogUploadSlots slots, CancellationToken ct, string? source = null, string? status = null)
    {
        var limits = options.Value;
        var started = System.Diagnostics.Stopwatch.GetTimestamp();
        var format = CatalogMediaTypes.ForUpload(request.ContentType);
        if (format is null) return Problems.UnsupportedMediaType(request.ContentType, CatalogMediaTypes.Uploads);
        if (format != CatalogFormat.Json)
        {
            if (!slots.TryEnter())
            {
                request.HttpContext.Response.Headers.RetryAfter = "5";
                return Problems.Unavailable($"{limits.MaxConcurrentCatalogUploads} QuakeML or FDSN text uploads are " +
                    "already being read; nothing was stored. Retry after 5 s.");
            }
            try
            {
                var staged = await CatalogUpload.StageAsync(request, format.Value, source, status, limits,
                    clock.GetUtcNow().UtcDateTime, store, ct);
                if (staged.Invalid is { } invalid) return invalid;
                if (staged.Problem is { } problem) return problem;
                await using var batch = staged.Batch!;
                return await StoreAsync(batch, isArray: true, request, logs, started, ct);
            }
            finally
            {
                slots.Release();
            }
        }
        if (request.ContentLength > limits.MaxBodyBytes) return Problems.TooLarge(limits.MaxBodyBytes);
        if (source is not null || status is not null)
        {
            return Problems.Invalid(new Dictionary<string, string[]>
            {
                [source is not null ? "source" : "status"] =
                    ["applies to QuakeML and FDSN text bodies; a JSON event names its own source and status"],
            }, "Some query parameters are not valid.");
        }

        JsonDocument document;
        try
        {
            document = await JsonDocument.ParseAsync(request.Body, new JsonDocumentOptions { MaxDepth = 8 }, ct);
        }
        catch (JsonException e)
        {
            return Problems.Malformed(
                $"The body is not valid JSON (line {e.LineNumber + 1}, byte {e.BytePositionInLine + 1}): " +
                "check quoting, commas and that the text is UTF-8.");
        }
        catch (BadHttpRequestException e) when (e.StatusCode == StatusCodes.Status413PayloadTooLarge)
        {
            return Problems.TooLarge(limits.MaxBodyBytes);
        }

        using (document)
        {
            var root = document.RootElement;
            if (root.ValueKind == JsonValueKind.Array && root.GetArrayLength() > limits.MaxEventsPerPost)
            {
                return Problems.BadRequest("batch-too-large", "Too many events in one request",
                    $"Send at most {limits.MaxEventsPerPost} events per request; this one has {root.GetArrayLength()}.");
            }
            // Each checked event goes straight into the batch's staging table instead of a list: a list of a
            // hundred thousand events would outlive several collections, and copying it is what made the
            // collector pause every request in the process. The walk is CPU work of up to a second, with blocking
            // writes when the staging buffer fills, so it runs on a thread of its own: on the pool it would hold
            // one of the few threads that answer every other request (docs/PERFORMANCE.md, "Load").
            await using var batch = await store.BeginBatchAsync(ct);
            var now = clock.GetUtcNow().UtcDateTime;
            void Stage(Forecast.Storage.Events.EventInput e)
            {
                ct.ThrowIfCancellationRequested();   // the client left or the request timed out: stop, roll back
                batch.Add(e);
            }
            var parsed = root.ValueKind == JsonValueKind.Array && root.GetArrayLength() > OwnThreadAbove
                ? await Task.Factory.StartNew(() => EventJson.Read(root, now, Stage), CancellationToken.None,
                    TaskCreationOptions.LongRunning, TaskScheduler.Default)
                : EventJson.Read(root, now, Stage);
            if (parsed.Errors.Count > 0)
            {
                var detail = !parsed.IsArray ? "The event is not valid; nothing was stored."
                    : parsed.Count == 0 ? "The batch holds no events; nothing was stored."
                    : $"{Math.Max(parsed.BadItems, 1)} of {parsed.Count} events are not valid; nothing was stored.";
                if (parsed.Errors.Count >= EventJson.MaxReportedErrors)
                    detail += $" Only the first {EventJson.MaxReportedErrors} problems are listed.";
                return Problems.Invalid(parsed.Errors, detail);
            }
            return await StoreAsync(batch, parsed.IsArray, request, logs, started, ct);
        }
    }

    /// <summary>Commits a staged batch, whatever format it came in, and answers as the JSON ingest always has.
    /// </summary>
    static async Task<Results<Created<EventWriteResult>, Ok<EventWriteResult>, Ok<BatchWriteResult>,
        ValidationProblem, ProblemHttpResult>> StoreAsync(
        EventBatch batch, bool isArray, HttpRequest request, ILoggerFactory logs, long started, CancellationToken ct)
    {
        var staged = System.Diagnostics.Stopwatch.GetTimestamp();
        var outcome = await batch.CommitAsync(Policies.KeyId(request.HttpContext.User), ItemsListedUpTo, ct);
        if (outcome.Summary is not { } summary)
        {
            // One batch naming the same event twice would make its outcome depend on row order: refuse it.
            var errors = outcome.Duplicates.ToDictionary(d => $"[{d.Item}].id",
                d => new[] { $"repeats the event of item [{d.FirstItem}]; send each event once per batch" });
            return Problems.Invalid(errors, $"The batch names {(outcome.Duplicates.Count == 1 ? "an event" : "events")} " +
                "more than once; nothing was stored.");
        }
        logs.CreateLogger("Forecast.Ingest").LogInformation(
            "Stored {Count} events ({Created} new, {Revised} revised): read, checked and staged in {ReadMs:F0} ms, stored in {StoreMs:F0} ms",
            summary.Total, summary.Created, summary.Revised,
            System.Diagnostics.Stopwatch.GetElapsedTime(started, staged).TotalMilliseconds,
            System.Diagnostics.Stopwatch.GetElapsedTime(staged).TotalMilliseconds);
        if (!isArray)
        {
            var item = View(summary.Items[0]);
            return summary.Created == 1
                ? TypedResults.Created(EventUrl(item.Source, item.Id), item)
                : TypedResults.Ok(item);
        }
        return TypedResults.Ok(new BatchWriteResult(summary.Total, summary.Created, summary.Revised,
            summary.Unchanged, summary.Total <= ItemsListedUpTo ? summary.Items.Select(View).ToList() : null));
    }

    static async Task<Results<Ok<EventWithHistory>, ProblemHttpResult>> GetEvent(
        string source, string id, EventStore store, CancellationToken ct)
    {
        var row = await store.FindAsync(source, id, ct);
        if (row is null) return Problems.NotFound("event", $"{source}/{id}");
        var revisions = await store.RevisionsAsync(row.Id, ct);
        return TypedResults.Ok(new EventWithHistory(EventView.From(row), revisions.Select(RevisionView.From).ToList()));
    }

    /// <param name="from">Origin time at or after, ISO 8601 with offset.</param>
    /// <param name="to">Origin time before, ISO 8601 with offset.</param>
    /// <param name="latitude">Centre of a radius search (with longitude and radiusKm).</param>
    /// <param name="cursor">The <c>next</c> value of the previous page.</param>
    static async Task<Results<Ok<EventPage>, FileContentHttpResult, ValidationProblem, ProblemHttpResult>> QueryEvents(
        HttpContext http, EventStore store, CancellationToken ct,
        string? from = null, string? to = null, string? minMagnitude = null, string? maxMagnitude = null,
        string? minLatitude = null, string? maxLatitude = null, string? minLongitude = null,
        string? maxLongitude = null, string? latitude = null, string? longitude = null, string? radiusKm = null,
        bool includeDeleted = false, string? cursor = null, int limit = 100)
    {
        var errors = new Dictionary<string, string[]>();
        var q = new EventQuery
        {
            FromUtc = QueryTime(nameof(from), from, errors),
            ToUtc = QueryTime(nameof(to), to, errors),
            MinMagnitude = QueryNumber(nameof(minMagnitude), minMagnitude, -2, 10, errors),
            MaxMagnitude = QueryNumber(nameof(maxMagnitude), maxMagnitude, -2, 10, errors),
            MinLatitude = QueryNumber(nameof(minLatitude), minLatitude, -90, 90, errors),
            MaxLatitude = QueryNumber(nameof(maxLatitude), maxLatitude, -90, 90, errors),
            MinLongitude = QueryNumber(nameof(minLongitude), minLongitude, -180, 180, errors),
            MaxLongitude = QueryNumber(nameof(maxLongitude), maxLongitude, -180, 180, errors),
            IncludeDeleted = includeDeleted,
            After = DecodeCursor(cursor, errors),
            Limit = limit,
        };
        if (limit is < 1 or > MaxPageSize) errors["limit"] = [$"must be between 1 and {MaxPageSize}"];
        if ((q.MinLongitude is null) != (q.MaxLongitude is null))
            errors["minLongitude"] = ["minLongitude and maxLongitude go together"];

        var lat = QueryNumber(nameof(latitude), latitude, -90, 90, errors);
        var lon = QueryNumber(nameof(longitude), longitude, -180, 180, errors);
        var r = QueryNumber(nameof(radiusKm), radiusKm, 0, 20_040, errors);
        if (lat is not null || lon is not null || r is not null)
        {
            if (lat is null || lon is null || r is null)
                errors["radiusKm"] = ["latitude, longitude and radiusKm go together"];
            else q = q with { Circle = (lat.Value, lon.Value, r.Value) };
        }
        if (errors.Count > 0) return Problems.Invalid(errors, "Some query parameters are not valid.");

        var rows = await store.QueryAsync(q, ct);
        var next = rows.Count == limit ? EncodeCursor(rows[^1]) : null;
        http.Response.Headers.Vary = "Accept";
        var (format, mediaType) = CatalogMediaTypes.ForDownload(http.Request.Headers.Accept);
        if (format != CatalogFormat.Json)
        {
            var written = CatalogDownload.Write(http, rows, format, mediaType, next);
            return written.Result is FileContentHttpResult file ? file : (ProblemHttpResult)written.Result;
        }
        return TypedResults.Ok(new EventPage(rows.Select(EventView.From).ToList(), next));
    }

    static DateTime? QueryTime(string name, string? text, Dictionary<string, string[]> errors)
    {
        if (text is null) return null;
        var t = EventJson.ParseUtc(text);
        if (t is null) errors[name] = ["must be an ISO 8601 time with 'Z' or an offset"];
        return t;
    }

    static double? QueryNumber(string name, string? text, double min, double max, Dictionary<string, string[]> errors)
    {
        if (text is null) return null;
        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v)
            || v < min || v > max)
        {
            errors[name] = [string.Create(CultureInfo.InvariantCulture, $"must be a number from {min} to {max}")];
            return null;
        }
        return v;
    }

    // The cursor is opaque to clients: base64url of "<origin time ticks>:<row id>".
    static string EncodeCursor(EventRow last) => Convert.ToBase64String(
            Encoding.ASCII.GetBytes(string.Create(CultureInfo.InvariantCulture, $"{last.OriginTime.Ticks}:{last.Id}")))
        .TrimEnd('=').Replace('+', '-').Replace('/', '_');

    static (DateTime, long)? DecodeCursor(string? cursor, Dictionary<string, string[]> errors)
    {
        if (cursor is null) return null;
        try
        {
            var b64 = cursor.Replace('-', '+').Replace('_', '/');
            b64 = b64.PadRight(b64.Length + (4 - b64.Length % 4) % 4, '=');
            var parts = Encoding.ASCII.GetString(Convert.FromBase64String(b64)).Split(':');
            if (parts.Length == 2 && long.TryParse(parts[0], CultureInfo.InvariantCulture, out var ticks)
                && long.TryParse(parts[1], CultureInfo.InvariantCulture, out var id)
                && ticks >= DateTime.MinValue.Ticks && ticks <= DateTime.MaxValue.Ticks)
            {
                return (new DateTime(ticks, DateTimeKind.Utc), id);
            }
        }
        catch (FormatException)
        {
        }
        errors["cursor"] = ["is not a cursor this service issued; pass the 'next' value of the previous page"];
        return null;
    }

    static EventWriteResult View(EventUpsertItem i) =>
        new(i.Source, i.EventId, i.Outcome.ToString().ToLowerInvariant(), i.Version);

    public static string EventUrl(string source, string id) =>
        $"/v1/events/{Uri.EscapeDataString(source)}/{string.Join('/', id.Split('/').Select(Uri.EscapeDataString))}";
}
