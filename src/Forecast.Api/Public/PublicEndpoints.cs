using System.Globalization;
using System.Security.Cryptography;
using System.Text.Json;
using Forecast.Api.Forecasts;
using Forecast.Api.Infrastructure;
using Forecast.Api.Sequences;
using Forecast.Core.Advisory;
using Forecast.Core.Forecasting;
using Forecast.Formats;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Public;

/// <summary>A released forecast as the public sees it: the advisory as released, the table, the notice of a drill.
/// Drafts and withdrawn forecasts never appear here.</summary>
public sealed record PublicForecast(
    long SequenceId, int Number, string State, bool Exercise, string? Notice, string Title, DateTime IssueTime,
    DateTime ReleasedAt, string EngineVersion, double MainshockMagnitude, DateTime MainshockTime, string Advisory,
    System.Text.Json.JsonElement? Table, string Url);

public sealed record PublicSequence(
    long Id, string Title, bool Exercise, string? Notice, double MainshockMagnitude, DateTime MainshockTime,
    double CentreLatitude, double CentreLongitude, double ZoneRadiusKm, int LatestReleasedNumber, string ForecastUrl);

public static class PublicEndpoints
{
    /// <summary>RFC 7946, 12.</summary>
    public const string GeoJsonType = "application/geo+json";

    /// <summary>The media type CAP 1.2 feeds commonly use (the standard names none).</summary>
    public const string CapType = "application/cap+xml";

    public static RouteGroupBuilder MapPublic(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/v1/public").WithTags("Public")
            .RequireCors(PublicApi.CorsPolicy).RequireRateLimiting(PublicApi.RatePolicy);
        group.MapGet("/sequences", Sequences).WithName("PublicSequences")
            .WithSummary("Active sequences that have a released forecast");
        group.MapGet("/sequences/{id:long}/forecast", Current).WithName("PublicForecast")
            .WithSummary("The released forecast of a sequence, with cache headers; 304 on a matching If-None-Match");
        group.MapGet("/sequences/{id:long}/forecasts", History).WithName("PublicForecastHistory")
            .WithSummary("Forecasts that were released (the current one and those it superseded), newest first");
        group.MapGet("/feed.geojson", Feed).WithName("PublicFeed")
            .WithSummary("RFC 7946 GeoJSON of each active sequence's released forecast: a mainshock Point and a zone " +
                         "Polygon feature per forecast, with the headline cell (the one-week window at M >= 5)")
            .WithDescription(FeedRule)
            .Produces(StatusCodes.Status200OK, contentType: GeoJsonType);
        group.MapGet("/sequences/{id:long}/forecasts/{number:int}/cap", Cap).WithName("PublicCapAlert")
            .WithSummary("CAP 1.2 alert of a released forecast: Alert for a sequence's first, Update (referencing the " +
                         "earlier alerts) for later ones, Cancel once withdrawn; status Exercise for drills; drafts 404")
            .WithDescription(CapRule)
            .Produces(StatusCodes.Status200OK, contentType: CapType);
        return group;
    }

    static async Task<Ok<IReadOnlyList<PublicSequence>>> Sequences(
        HttpContext http, SequenceStore sequences, ForecastStore forecasts, IOptions<PublicApiOptions> o, CancellationToken ct)
    {
        var list = new List<PublicSequence>();
        foreach (var s in await sequences.ListAsync("active", 500, ct))
        {
            if (await forecasts.LatestAsync(s.Id, releasedOnly: true, ct) is not { } f) continue;
            list.Add(new PublicSequence(s.Id, Title(s), s.Exercise, SequenceView.ExerciseNotice(s.Exercise), s.MainshockMagnitude,
                s.MainshockTime, s.CentreLatitude, s.CentreLongitude, s.ZoneRadiusKm, f.Number,
                $"/v1/public/sequences/{s.Id}/forecast"));
        }
        Cache(http, o.Value);
        return TypedResults.Ok<IReadOnlyList<PublicSequence>>(list);
    }

    /// <summary>Two small queries (the sequence, which forecast is released), shared by concurrent pollers; the body
    /// is rendered once per forecast and the sequence fields it shows.</summary>
    static async Task<Results<JsonBody<PublicForecast>, StatusCodeHttpResult, ProblemHttpResult>> Current(
        long id, HttpContext http, ForecastStore forecasts, RenderedBodies bodies, CoalescedReads reads,
        IOptions<PublicApiOptions> o, CancellationToken ct)
    {
        var (s, v) = await reads.ReleasedAsync(id, ct);
        if (s is null || v is null) return Problems.NotFound("released forecast of sequence", id);
        Cache(http, o.Value);
        if (ForecastViews.NotModified(http, v, "p")) return TypedResults.StatusCode(StatusCodes.Status304NotModified);
        if (bodies.Get(CurrentKey(s, v.Number)) is { } cached) return new JsonBody<PublicForecast>(cached.Body);

        var f = await forecasts.FindAsync(id, v.Number, ct);
        if (f?.State != "released")
        {
            // Superseded or withdrawn since the first read: answer from one consistent read, uncached.
            f = await forecasts.LatestAsync(id, releasedOnly: true, ct);
            if (f is null) return Problems.NotFound("released forecast of sequence", id);
            ForecastViews.NotModified(http, f, "p");
            return new JsonBody<PublicForecast>(bodies.Serialize(View(s, f)));
        }
        return new JsonBody<PublicForecast>(bodies.Set(CurrentKey(s, f.Number), new Rendered(bodies.Serialize(View(s, f)))).Body);
    }

    /// <summary>What the public forecast shows: the released forecast (immutable) and the sequence's title fields.</summary>
    static string CurrentKey(SequenceRow s, int number) => string.Create(CultureInfo.InvariantCulture,
        $"p:{s.Id}:{number}:{s.Exercise}:{s.MainshockMagnitude:R}:{s.MainshockTime.Ticks}:{s.Name}");

    static async Task<Results<Ok<IReadOnlyList<PublicForecast>>, ProblemHttpResult>> History(
        long id, HttpContext http, SequenceStore sequences, ForecastStore forecasts, IOptions<PublicApiOptions> o,
        CancellationToken ct)
    {
        var s = await sequences.FindAsync(id, ct);
        if (s is null) return Problems.NotFound("sequence", id);
        var rows = await forecasts.ListAsync(id, ["released", "superseded"], 100, ct);
        Cache(http, o.Value);
        return TypedResults.Ok<IReadOnlyList<PublicForecast>>(rows.Select(f => View(s, f, withTable: false)).ToList());
    }

    const string FeedRule =
        "Only forecasts in state released are listed (never drafts, superseded or withdrawn ones), one per active " +
        "sequence. A forecast is two features, because a GeoJSON Feature holds one geometry: the mainshock as a " +
        "Point and the aftershock zone as a Polygon (role 'mainshock' or 'zone'), with the same properties. " +
        "The properties summarise the headline cell: the window nearest one week from the issue time at the " +
        "threshold nearest M 5 (in the default table exactly 7 days at M >= 5, the size that can damage weak " +
        "buildings near the epicentre, which the advisory also states): probability of at least one shock, " +
        "expected number and 95 % range. A fixed size, not the mainshock's, so that a dashboard compares " +
        "sequences on one scale. 'advisory' links to the public forecast, 'cap' to its CAP alert.";

    const string CapRule =
        "The alert is about the headline cell (the one-week window at M >= 5, as in the GeoJSON feed). " +
        "certainty: Likely when P > 0.5, Possible when P >= 0.01, else Unlikely (CAP 1.2, 3.2.2 value meanings); " +
        "urgency: Expected when certainty is Likely and the window starts within an hour of sent, else Future; " +
        "severity from the threshold: M >= 7 Extreme, >= 6 Severe, >= 5 Moderate, else Minor (so Moderate for " +
        "the M 5 headline). identifier forecast-{id}-{n} (a Cancel: forecast-{id}-{n}-cancel); sent is the release " +
        "time (a Cancel's: the withdrawal time). A withdrawn forecast that was released serves its Cancel, " +
        "referencing its own alert; the withdrawal reason is internal and not published. " +
        "Drafts, and forecasts withdrawn before release, never had an alert: 404.";

    /// <summary>The GeoJSON feed; what it lists and the headline cell are stated in <see cref="FeedRule"/>.</summary>
    static async Task<Results<FileContentHttpResult, StatusCodeHttpResult>> Feed(
        HttpContext http, ForecastStore forecasts, RenderedBodies bodies, CoalescedReads reads,
        IOptions<PublicApiOptions> o, CancellationToken ct)
    {
        var root = BaseUrl(http, o.Value);
        // Two small queries (shared by concurrent pollers) decide whether the rendered feed is still current; only a
        // change renders it again.
        var (active, released) = await reads.FeedAsync(ct);
        var rendered = bodies.Get(FeedKey(root, active, released)) ?? await RenderFeedAsync(root, active, forecasts, bodies, ct);
        Cache(http, o.Value);
        http.Response.Headers.ETag = rendered.ETag;
        return Matches(http, rendered.ETag!)
            ? TypedResults.StatusCode(StatusCodes.Status304NotModified)
            : TypedResults.File(rendered.Body, GeoJsonType);
    }

    static async Task<Rendered> RenderFeedAsync(string root, IReadOnlyList<SequenceRow> active, ForecastStore forecasts,
        RenderedBodies bodies, CancellationToken ct)
    {
        var features = new List<ForecastFeature>();
        var shown = new Dictionary<long, int>();
        foreach (var s in active)
        {
            if (await forecasts.LatestAsync(s.Id, releasedOnly: true, ct) is not { } f) continue;
            shown[s.Id] = f.Number;
            var result = Stored(f);
            if (Headline(result.Table) is not { } cell) continue;
            features.Add(new ForecastFeature(
                $"forecast-{s.Id}-{f.Number}", result.MainshockId, s.CentreLatitude, s.CentreLongitude,
                f.MainshockMagnitude, result.MainshockTimeUtc, s.ZoneRadiusKm, f.IssueTime, cell.StartUtc, cell.EndUtc,
                cell.MinMagnitude, cell.Probability, Count(cell.Low95), Count(cell.High95), f.State, f.Exercise,
                root + CurrentPath(s.Id), s.Id, f.Number, Title(s, f.Exercise), SequenceView.ExerciseNotice(f.Exercise),
                cell.ExpectedNumber, root + CapPath(s.Id, f.Number)));
        }
        using var buffer = new MemoryStream();
        ForecastGeoJson.WriteFeatureCollection(buffer, features);
        var body = buffer.ToArray();
        // The feed has no single record to version, so its validator is a digest of the bytes.
        var etag = $"\"g-{Convert.ToHexStringLower(SHA256.HashData(body))[..32]}\"";
        // Keyed by the forecasts actually rendered, so a release that raced the first read is not cached as older.
        return bodies.Set(FeedKey(root, active, shown), new Rendered(body, etag));
    }

    /// <summary>Everything the feed shows: per active sequence with a released forecast, the forecast (immutable)
    /// and the sequence fields in its features; and the base of its links.</summary>
    static string FeedKey(string root, IReadOnlyList<SequenceRow> active, IReadOnlyDictionary<long, int> released)
    {
        var key = new System.Text.StringBuilder("g:").Append(root);
        foreach (var s in active)
        {
            if (!released.TryGetValue(s.Id, out var number)) continue;
            key.Append(CultureInfo.InvariantCulture,
                $"|{s.Id}:{number}:{s.CentreLatitude:R}:{s.CentreLongitude:R}:{s.ZoneRadiusKm:R}:{s.MainshockMagnitude:R}:{s.Name}");
        }
        return key.ToString();
    }

    /// <summary>The CAP 1.2 alert of forecast <paramref name="number"/>.</summary>
    /// <remarks>Qualifiers from the headline cell by <see cref="CapAlert"/>'s rule (stated in <see cref="CapRule"/>,
    /// which OpenAPI shows): certainty Likely for P &gt; 0.5, Possible for P ≥ 0.01, else Unlikely; urgency Expected
    /// only when Likely and the window starts within the hour, else Future; severity from the threshold magnitude
    /// (M ≥ 7 Extreme, ≥ 6 Severe, ≥ 5 Moderate, else Minor).</remarks>
    static async Task<Results<FileContentHttpResult, StatusCodeHttpResult, ProblemHttpResult>> Cap(
        long id, int number, HttpContext http, SequenceStore sequences, ForecastStore forecasts,
        IOptions<PublicApiOptions> o, IOptions<ForecastOptions> forecastOptions, CancellationToken ct)
    {
        var s = await sequences.FindAsync(id, ct);
        var f = s is null ? null : await forecasts.FindAsync(id, number, ct);
        // Only a forecast that was released ever had an alert: not a draft, nor one withdrawn while a draft.
        if (s is null || f?.ReleasedAt is not { } releasedAt) return Problems.NotFound("released forecast", $"{id}/{number}");
        var result = Stored(f);
        if (Headline(result.Table) is not { } cell) return Problems.NotFound("released forecast", $"{id}/{number}");

        var sender = o.Value.CapSender;
        var root = BaseUrl(http, o.Value);
        var agency = forecastOptions.Value.AgencyName;
        var cautions = string.Join(" ", AdvisoryBuilder.Cautions(agency));
        var title = Title(s, f.Exercise);
        var notice = SequenceView.ExerciseNotice(f.Exercise) is { } n ? n + " " : "";
        CapAlertInput alert;
        if (f.State == "withdrawn")
        {
            alert = Alert(AlertId(id, number) + "-cancel", f.WithdrawnAt ?? releasedAt, CapMessageType.Cancel,
                [(sender, AlertId(id, number), releasedAt)],
                Clip($"CANCELLED: {title}, forecast {number}"),
                $"{notice}Forecast {number} of this sequence has been withdrawn by the issuing service and no longer " +
                "applies. The current forecast, if any, is at the web address given.",
                $"Disregard forecast {number}. {cautions}");
        }
        else
        {
            // CAP 1.2, 3.2.1 references: every earlier alert of the sequence (those that were released).
            var earlier = (await forecasts.ListAsync(id, ["released", "superseded", "withdrawn"], 10_000, ct))
                .Where(e => e.Number < number && e.ReleasedAt is not null).OrderBy(e => e.Number)
                .Select(e => (sender, AlertId(id, e.Number), e.ReleasedAt!.Value)).ToList();
            alert = Alert(AlertId(id, number), releasedAt, earlier.Count == 0 ? CapMessageType.Alert : CapMessageType.Update,
                earlier,
                Clip(string.Create(CultureInfo.InvariantCulture,
                    $"{title}: {cell.Probability * 100:0.#} % chance of M {cell.MinMagnitude:0.0}+ within {cell.T2Days - cell.T1Days:0.#} days")),
                f.PublishedAdvisory, notice + cautions);
        }
        Cache(http, o.Value);
        if (ForecastViews.NotModified(http, f, "cap")) return TypedResults.StatusCode(StatusCodes.Status304NotModified);
        using var buffer = new MemoryStream();
        CapAlert.Write(buffer, alert);
        return TypedResults.File(buffer.ToArray(), CapType);

        CapAlertInput Alert(string identifier, DateTime sent, CapMessageType type,
            IReadOnlyList<(string, string, DateTime)> references, string headline, string description, string instruction) =>
            new(identifier, sender, sent, f.Exercise, type, references, "Aftershock forecast", headline, description,
                instruction, string.Create(CultureInfo.InvariantCulture,
                    $"Within {s.ZoneRadiusKm:0.#} km of the mainshock epicentre ({s.CentreLatitude:0.00}, {s.CentreLongitude:0.00})"),
                s.CentreLatitude, s.CentreLongitude, s.ZoneRadiusKm, cell.MinMagnitude, cell.Probability, cell.StartUtc,
                cell.EndUtc, root + CurrentPath(id));
    }

    /// <summary>The part of a stored engine result the feed and alerts need.</summary>
    sealed record StoredResult(string MainshockId, DateTime MainshockTimeUtc, IReadOnlyList<ForecastRow> Table);

    static StoredResult Stored(ForecastRecord f) =>
        JsonSerializer.Deserialize<StoredResult>(f.Result, ForecastService.Json)
        ?? throw new InvalidOperationException($"Forecast {f.SequenceId}/{f.Number} has no result.");

    /// <summary>The window nearest one week, then the threshold nearest M 5 (see <see cref="FeedRule"/>).</summary>
    static ForecastRow? Headline(IReadOnlyList<ForecastRow>? table) => table?
        .OrderBy(r => Math.Abs(r.T2Days - r.T1Days - 7)).ThenBy(r => Math.Abs(r.MinMagnitude - 5))
        .ThenBy(r => r.MinMagnitude).FirstOrDefault();

    static int Count(long n) => (int)Math.Clamp(n, 0, int.MaxValue);

    static string AlertId(long sequenceId, int number) => $"forecast-{sequenceId}-{number}";

    static string Clip(string headline) => headline.Length <= 160 ? headline : headline[..159] + "…";

    static string CurrentPath(long id) => $"/v1/public/sequences/{id}/forecast";

    static string CapPath(long id, int number) => $"/v1/public/sequences/{id}/forecasts/{number}/cap";

    static string BaseUrl(HttpContext http, PublicApiOptions o) =>
        string.IsNullOrEmpty(o.BaseUrl) ? $"{http.Request.Scheme}://{http.Request.Host}" : o.BaseUrl.TrimEnd('/');

    static bool Matches(HttpContext http, string etag)
    {
        var ifNoneMatch = http.Request.Headers.IfNoneMatch.ToString();
        return ifNoneMatch.Length > 0 && (ifNoneMatch.Trim() == "*" || ifNoneMatch.Split(',').Select(t => t.Trim())
            .Select(t => t.StartsWith("W/", StringComparison.Ordinal) ? t[2..] : t).Contains(etag, StringComparer.Ordinal));
    }

    static PublicForecast View(SequenceRow s, ForecastRecord f, bool withTable = true)
    {
        System.Text.Json.JsonElement? table = null;
        if (withTable)
        {
            using var doc = System.Text.Json.JsonDocument.Parse(f.Result);
            if (doc.RootElement.TryGetProperty("table", out var t)) table = t.Clone();
        }
        return new PublicForecast(f.SequenceId, f.Number, f.State, f.Exercise, SequenceView.ExerciseNotice(f.Exercise), Title(s),
            f.IssueTime, f.ReleasedAt!.Value, f.EngineVersion, f.MainshockMagnitude, s.MainshockTime, f.PublishedAdvisory,
            table, $"/v1/public/sequences/{f.SequenceId}/forecasts");
    }

    static string Title(SequenceRow s) => Title(s, s.Exercise);

    static string Title(SequenceRow s, bool exercise) =>
        (exercise ? "EXERCISE: " : "") + (s.Name ?? FormattableString.Invariant($"Magnitude {s.MainshockMagnitude:0.0} earthquake"));

    static void Cache(HttpContext http, PublicApiOptions o) =>
        http.Response.Headers.CacheControl = $"public, max-age={o.CacheSeconds}";
}
