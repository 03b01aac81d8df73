using Forecast.Api.Forecasts;
using Forecast.Api.Infrastructure;
using Forecast.Api.Sequences;
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

    static async Task<Results<Ok<PublicForecast>, StatusCodeHttpResult, ProblemHttpResult>> Current(
        long id, HttpContext http, SequenceStore sequences, ForecastStore forecasts, IOptions<PublicApiOptions> o,
        CancellationToken ct)
    {
        var s = await sequences.FindAsync(id, ct);
        var f = s is null ? null : await forecasts.LatestAsync(id, releasedOnly: true, ct);
        if (s is null || f is null) return Problems.NotFound("released forecast of sequence", id);
        Cache(http, o.Value);
        return ForecastViews.NotModified(http, f, "p")
            ? TypedResults.StatusCode(StatusCodes.Status304NotModified)
            : TypedResults.Ok(View(s, f));
    }

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

    static string Title(SequenceRow s) =>
        (s.Exercise ? "EXERCISE: " : "") + (s.Name ?? FormattableString.Invariant($"Magnitude {s.MainshockMagnitude:0.0} earthquake"));

    static void Cache(HttpContext http, PublicApiOptions o) =>
        http.Response.Headers.CacheControl = $"public, max-age={o.CacheSeconds}";
}
