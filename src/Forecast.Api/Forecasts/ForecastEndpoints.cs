using Forecast.Api.Auth;
using Forecast.Api.Events;
using Forecast.Api.Infrastructure;
using Forecast.Core.ReasenbergJones;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;
using Forecast.Api.Sequences;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Forecasts;

public static class ForecastEndpoints
{
    const int MaxPageSize = 500;
    const int MaxAdvisoryChars = 20_000;
    static readonly string[] States = ["draft", "released", "superseded", "withdrawn"];

    public static RouteGroupBuilder MapForecasts(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/v1/sequences/{id:long}/forecasts").WithTags("Forecasts");
        group.MapGet("/", List).WithName("ListForecasts").RequireAuthorization()
            .WithSummary("The forecast history of a sequence, newest first; filter by state");
        group.MapGet("/latest", Latest).WithName("GetLatestForecast").RequireAuthorization()
            .WithSummary("The newest forecast in any state, with ETag and Last-Modified; 304 on a matching If-None-Match");
        group.MapGet("/{number:int}", Get).WithName("GetForecast").RequireAuthorization()
            .WithSummary("One forecast, with ETag and Last-Modified");
        group.MapPost("/", Compute).WithName("ComputeForecast").RequireAuthorization(Policies.Analyst)
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("Compute a forecast now (a draft), optionally with issue time, Mc, fit start, prior, windows, thresholds");
        group.MapPost("/{number:int}/release", Release).WithName("ReleaseForecast").RequireAuthorization(Policies.Analyst)
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("Release a draft, optionally with an edited advisory (the edit is kept beside the generated text)")
            .WithDescription("An edited advisory may reword and add, but must keep word for word every statement of a " +
                "chance with its numbers and every standing caution of the generated text (white space may differ), " +
                "and the exercise marker on a drill; otherwise 400 names each missing part.");
        group.MapPost("/{number:int}/withdraw", Withdraw).WithName("WithdrawForecast").RequireAuthorization(Policies.Analyst)
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("Withdraw a forecast: it is never shown publicly again");
        return group;
    }

    static async Task<Results<Ok<IReadOnlyList<ForecastSummary>>, ValidationProblem, ProblemHttpResult>> List(
        long id, SequenceStore sequences, ForecastStore store, CancellationToken ct, string? state = null, int limit = 100)
    {
        var errors = new Dictionary<string, string[]>();
        if (state is not null && !States.Contains(state)) errors["state"] = [$"must be one of {string.Join(", ", States)}"];
        if (limit is < 1 or > MaxPageSize) errors["limit"] = [$"must be between 1 and {MaxPageSize}"];
        if (errors.Count > 0) return Problems.Invalid(errors, "Some query parameters are not valid.");
        if (await sequences.FindAsync(id, ct) is null) return Problems.NotFound("sequence", id);
        var rows = await store.ListAsync(id, state is null ? null : [state], limit, ct);
        return TypedResults.Ok<IReadOnlyList<ForecastSummary>>(rows.Select(ForecastSummary.From).ToList());
    }

    /// <summary>One small query for which forecast is the latest, shared by concurrent pollers
    /// (<see cref="CoalescedReads"/>); the body is rendered once per forecast and state
    /// (<see cref="ForecastViews.RenderAsync"/>), so frequent polling stays cheap.</summary>
    static async Task<Results<JsonBody<ForecastView>, StatusCodeHttpResult, ProblemHttpResult>> Latest(
        long id, HttpContext http, SequenceStore sequences, ForecastStore store, RenderedBodies bodies, CoalescedReads reads,
        CancellationToken ct)
    {
        var v = await reads.LatestVersionAsync(id, ct);
        if (v is null)
        {
            return await sequences.FindAsync(id, ct) is null
                ? Problems.NotFound("sequence", id)
                : Problems.NotFound("forecast of sequence", id);
        }
        http.Response.Headers.CacheControl = "private, no-cache";
        return ForecastViews.NotModified(http, v, "a")
            ? TypedResults.StatusCode(StatusCodes.Status304NotModified)
            : await ForecastViews.RenderAsync(v, store, bodies, ct);
    }

    static async Task<Results<JsonBody<ForecastView>, StatusCodeHttpResult, ProblemHttpResult>> Get(
        long id, int number, HttpContext http, ForecastStore store, RenderedBodies bodies, CancellationToken ct)
    {
        var v = await store.VersionAsync(id, number, ct);
        if (v is null) return Problems.NotFound("forecast", $"{id}/{number}");
        http.Response.Headers.CacheControl = "private, no-cache";
        return ForecastViews.NotModified(http, v, "a")
            ? TypedResults.StatusCode(StatusCodes.Status304NotModified)
            : await ForecastViews.RenderAsync(v, store, bodies, ct);
    }

    static async Task<Results<Created<ForecastView>, ValidationProblem, ProblemHttpResult>> Compute(
        long id, ComputeRequest? body, HttpContext http, SequenceStore sequences, ForecastService service,
        CoalescedReads reads, CancellationToken ct)
    {
        body ??= new ComputeRequest(null, null, null, null, null, null);
        var errors = new Dictionary<string, string[]>();
        DateTime? issue = null;
        if (body.IssueTime is not null)
        {
            issue = EventJson.ParseUtc(body.IssueTime);
            if (issue is null) errors["issueTime"] = ["must be an ISO 8601 time with 'Z' or an offset"];
            else if (issue > DateTime.UtcNow.AddMinutes(5)) errors["issueTime"] = ["must not be in the future"];
        }
        if (body.Mc is { } mc && !(mc is >= -2 and <= 10)) errors["mc"] = ["must be a number from -2 to 10"];
        if (body.FitStartDays is { } s && !(s is >= 0 and <= 3650)) errors["fitStartDays"] = ["must be a number from 0 to 3650"];
        if (body.ParameterSet is { } set && !GenericParameterSets.TryGet(set, out _))
            errors["parameterSet"] = [$"is not a known set; known: {string.Join(", ", GenericParameterSets.All.Select(p => p.Name))}"];
        if (body.WindowDays is { } w && (w.Length is 0 or > 20 || w.Any(d => !(d > 0 && d <= 3650))))
            errors["windowDays"] = ["must list 1 to 20 durations, each above 0 and at most 3650 days"];
        if (body.Thresholds is { } t && (t.Length is 0 or > 20 || t.Any(m => !(m is >= -2 and <= 10))))
            errors["thresholds"] = ["must list 1 to 20 magnitudes from -2 to 10"];
        if (errors.Count > 0) return Problems.Invalid(errors, "No forecast was computed.");

        var sequence = await sequences.FindAsync(id, ct);
        if (sequence is null) return Problems.NotFound("sequence", id);
        if (sequence.Status != "active") return Problems.Conflict($"Sequence {id} is closed.");
        try
        {
            var f = await service.ComputeAsync(id, new ComputeOptions
            {
                IssueTimeUtc = issue, Mc = body.Mc, FitStartDays = body.FitStartDays, ParameterSet = body.ParameterSet,
                WindowDays = body.WindowDays, Thresholds = body.Thresholds,
            }, "manual", Policies.KeyId(http.User), skipIfUnchanged: false, ct);
            reads.Forget(id);
            return TypedResults.Created(ForecastViews.Url(id, f!.Number), ForecastView.From(f));
        }
        catch (SequenceException e)
        {
            await sequences.RecordErrorAsync(id, e.Message, ct);
            return Problems.Conflict(e.Message);
        }
        catch (ArgumentException e)
        {
            return Problems.BadRequest("forecast-input", "The forecast cannot be computed with these inputs", e.Message);
        }
    }

    static async Task<Results<Ok<ForecastView>, ValidationProblem, ProblemHttpResult>> Release(
        long id, int number, ReleaseRequest? body, HttpContext http, ForecastStore store, CoalescedReads reads,
        IOptions<ForecastOptions> options, CancellationToken ct)
    {
        var text = body?.AdvisoryText;
        if (text is not null && (string.IsNullOrWhiteSpace(text) || text.Length > MaxAdvisoryChars || HasControl(text)))
        {
            return Problems.Invalid(new Dictionary<string, string[]>
            {
                ["advisoryText"] = [$"must be 1 to {MaxAdvisoryChars} characters, not only spaces, with no control " +
                    "characters but line breaks and tabs"],
            }, "The forecast was not released.");
        }
        var current = await store.FindAsync(id, number, ct);
        if (current is null) return Problems.NotFound("forecast", $"{id}/{number}");
        if (text is not null && current.Exercise && !text.Contains(Core.Advisory.AdvisoryBuilder.ExerciseMarker, StringComparison.Ordinal))
        {
            return Problems.Invalid(new Dictionary<string, string[]>
            {
                ["advisoryText"] = [$"is for an exercise and must keep the marker '{Core.Advisory.AdvisoryBuilder.ExerciseMarker}'"],
            }, "The forecast was not released.");
        }
        if (text is not null && Core.Advisory.AdvisoryBuilder.MissingFromEdit(text, current.AdvisoryText,
                options.Value.AgencyName) is { Count: > 0 } missing)
        {
            return Problems.Invalid(new Dictionary<string, string[]>
            {
                ["advisoryText"] = [.. missing.Select(part => $"must keep, word for word, \"{part}\"")],
            }, "The forecast was not released: an edited advisory may reword and add, but must keep every statement " +
               "of a chance with its numbers and every standing caution of the generated one.");
        }
        var outcome = await store.ReleaseAsync(id, number, text, Policies.KeyId(http.User), ct);
        reads.Forget(id);
        return outcome switch
        {
            TransitionOutcome.Done => TypedResults.Ok(ForecastView.From((await store.FindAsync(id, number, ct))!)),
            TransitionOutcome.NotFound => Problems.NotFound("forecast", $"{id}/{number}"),
            TransitionOutcome.NewerReleased => Problems.Conflict(
                $"A newer forecast of sequence {id} is released; release a newer draft instead of {number}."),
            _ => Problems.Conflict($"Forecast {number} is {current.State}; only a draft can be released."),
        };
    }

    // PostgreSQL text cannot hold NUL, and other control characters have no place in published wording.
    static bool HasControl(string text) => text.Any(c => char.IsControl(c) && c is not ('\n' or '\r' or '\t'));

    static async Task<Results<Ok<ForecastView>, ValidationProblem, ProblemHttpResult>> Withdraw(
        long id, int number, WithdrawRequest? body, HttpContext http, ForecastStore store, CoalescedReads reads,
        CancellationToken ct)
    {
        if (body?.Reason is { } reason && (reason.Length > 2000 || HasControl(reason)))
        {
            return Problems.Invalid(new Dictionary<string, string[]>
            {
                ["reason"] = ["must be at most 2000 characters, with no control characters but line breaks and tabs"],
            }, "The forecast was not withdrawn.");
        }
        var outcome = await store.WithdrawAsync(id, number, body?.Reason, Policies.KeyId(http.User), ct);
        reads.Forget(id);
        return outcome switch
        {
            TransitionOutcome.Done => TypedResults.Ok(ForecastView.From((await store.FindAsync(id, number, ct))!)),
            TransitionOutcome.NotFound => Problems.NotFound("forecast", $"{id}/{number}"),
            _ => Problems.Conflict($"Forecast {number} is already withdrawn."),
        };
    }
}
