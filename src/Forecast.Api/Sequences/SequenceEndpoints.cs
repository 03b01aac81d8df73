using Forecast.Api.Auth;
using Forecast.Api.Infrastructure;
using Forecast.Core.ReasenbergJones;
using Forecast.Storage.Sequences;
using Microsoft.AspNetCore.Http.HttpResults;

namespace Forecast.Api.Sequences;

public static class SequenceEndpoints
{
    const int MaxPageSize = 500;

    public static RouteGroupBuilder MapSequences(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/v1/sequences").WithTags("Sequences");
        group.MapPost("/", Declare).WithName("DeclareSequence").RequireAuthorization(Policies.Analyst)
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("Declare a mainshock (by event reference); 409 with its location when it already has a sequence");
        group.MapGet("/", List).WithName("ListSequences").RequireAuthorization()
            .WithSummary("Sequences, newest first; filter by status (active, closed)");
        group.MapGet("/{id:long}", Get).WithName("GetSequence").RequireAuthorization()
            .WithSummary("One sequence: mainshock, zone, choices, last fit error, mainshock changes");
        group.MapGet("/{id:long}/events", Members).WithName("GetSequenceEvents").RequireAuthorization()
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("The mainshock, foreshocks and aftershocks of the sequence as the catalog stands; by Accept, " +
                          "JSON (the default), QuakeML 1.2 (application/vnd.quakeml+xml, application/xml, text/xml) " +
                          "or FDSN event text (text/plain), all members in time order");
        group.MapPatch("/{id:long}", Edit).WithName("EditSequence").RequireAuthorization(Policies.Analyst)
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("Change the name, zone, prior, Mc, fit start, exercise flag or background rate; queues a refit");
        group.MapPost("/{id:long}/close", Close).WithName("CloseSequence").RequireAuthorization(Policies.Analyst)
            .ProducesProblem(StatusCodes.Status409Conflict)
            .WithSummary("Close a sequence: no more refits");
        return group;
    }

    static async Task<Results<Created<SequenceView>, ValidationProblem, ProblemHttpResult>> Declare(
        DeclareSequence body, HttpContext http, SequenceStore store, CancellationToken ct)
    {
        var errors = new Dictionary<string, string[]>();
        // The event rules of ingest: no stored event can break them, and text PostgreSQL refuses (a NUL) never
        // reaches the lookup.
        if (Forecast.Core.Events.EventRules.CheckSource(body.Mainshock?.Source) is { } badSource)
            errors["mainshock.source"] = [badSource];
        if (Forecast.Core.Events.EventRules.CheckId(body.Mainshock?.Id) is { } badId) errors["mainshock.id"] = [badId];
        var choices = Check(((ISequenceFields)body).ToChoices(), errors, requireBackgroundPair: true);
        if (errors.Count > 0) return Problems.Invalid(errors, "The sequence was not declared.");

        var result = await store.DeclareAsync(body.Mainshock!.Source!, body.Mainshock.Id!, choices,
            Policies.KeyId(http.User), ct);
        switch (result.Outcome)
        {
            case DeclareOutcome.NoSuchEvent:
                return Problems.NotFound("event", $"{body.Mainshock.Source}/{body.Mainshock.Id}");
            case DeclareOutcome.EventRetracted:
                return Problems.BadRequest("event-retracted", "The event is retracted",
                    "A retracted event cannot be a mainshock; declare another event.");
            case DeclareOutcome.Duplicate:
                http.Response.Headers.Location = SequenceView.PathOf(result.SequenceId!.Value);
                return Problems.Conflict($"The event already is the mainshock of sequence {result.SequenceId} " +
                                         $"({SequenceView.PathOf(result.SequenceId.Value)}).");
        }
        var row = (await store.FindAsync(result.SequenceId!.Value, ct))!;
        return TypedResults.Created(SequenceView.PathOf(row.Id), SequenceView.From(row, []));
    }

    static async Task<Results<Ok<IReadOnlyList<SequenceView>>, ValidationProblem>> List(
        SequenceStore store, CancellationToken ct, string? status = null, int limit = 100)
    {
        var errors = new Dictionary<string, string[]>();
        if (status is not null and not "active" and not "closed") errors["status"] = ["must be 'active' or 'closed'"];
        if (limit is < 1 or > MaxPageSize) errors["limit"] = [$"must be between 1 and {MaxPageSize}"];
        if (errors.Count > 0) return Problems.Invalid(errors, "Some query parameters are not valid.");
        var rows = await store.ListAsync(status, limit, ct);
        return TypedResults.Ok<IReadOnlyList<SequenceView>>(rows.Select(r => SequenceView.From(r, [])).ToList());
    }

    static async Task<Results<Ok<SequenceView>, ProblemHttpResult>> Get(long id, SequenceStore store, CancellationToken ct)
    {
        var row = await store.FindAsync(id, ct);
        if (row is null) return Problems.NotFound("sequence", id);
        return TypedResults.Ok(SequenceView.From(row, await store.MainshockChangesAsync(id, ct)));
    }

    static async Task<Results<Ok<MembershipView>, FileContentHttpResult, ProblemHttpResult>> Members(
        long id, HttpContext http, SequenceStore store, CancellationToken ct)
    {
        var row = await store.FindAsync(id, ct);
        if (row is null) return Problems.NotFound("sequence", id);
        try
        {
            var m = await store.MembersAsync(row, null, ct);
            http.Response.Headers.Vary = "Accept";
            var (format, mediaType) = Formats.CatalogMediaTypes.ForDownload(http.Request.Headers.Accept);
            if (format != Formats.CatalogFormat.Json)
            {
                // The formats have no roles: the members go out in time order, as the catalog query would list them.
                var records = m.Foreshocks.Append(m.Mainshock).Concat(m.Aftershocks)
                    .OrderBy(e => e.OriginTime).ThenBy(e => e.Pk)
                    .Select(e => new Forecast.Formats.EventRecord(e.Source, e.EventId, e.OriginTime, e.Latitude,
                        e.Longitude, e.DepthKm, e.Magnitude, e.MagnitudeType, e.Status))
                    .ToList();
                var written = Formats.CatalogDownload.Write(records, format, mediaType);
                return written.Result is FileContentHttpResult file ? file : (ProblemHttpResult)written.Result;
            }
            return TypedResults.Ok(new MembershipView(id, SequenceView.ExerciseNotice(row.Exercise), MemberView.From(m.Mainshock),
                m.Foreshocks.Select(MemberView.From).ToList(), m.Aftershocks.Select(MemberView.From).ToList()));
        }
        catch (SequenceException e)
        {
            return Problems.Conflict(e.Message);
        }
    }

    static async Task<Results<Ok<SequenceView>, ValidationProblem, ProblemHttpResult>> Edit(
        long id, EditSequence body, SequenceStore store, CancellationToken ct)
    {
        var errors = new Dictionary<string, string[]>();
        var choices = Check(((ISequenceFields)body).ToChoices(), errors, requireBackgroundPair: true);
        if (body.ClearZoneRadius == true && body.ZoneRadiusKm is not null)
            errors["clearZoneRadius"] = ["cannot be combined with zoneRadiusKm"];
        var existing = await store.FindAsync(id, ct);
        if (existing is null) return Problems.NotFound("sequence", id);
        if (errors.Count > 0) return Problems.Invalid(errors, "The sequence was not changed.");
        if (existing.Status != "active") return Problems.Conflict($"Sequence {id} is closed; a closed sequence is not edited.");
        try
        {
            if (!await store.UpdateAsync(id, choices, body.ClearZoneRadius == true, ct))
                return Problems.Conflict($"Sequence {id} is closed; a closed sequence is not edited.");
        }
        catch (SequenceException e)
        {
            return Problems.Conflict(e.Message);
        }
        var row = (await store.FindAsync(id, ct))!;
        return TypedResults.Ok(SequenceView.From(row, await store.MainshockChangesAsync(id, ct)));
    }

    static async Task<Results<Ok<SequenceView>, ProblemHttpResult>> Close(long id, SequenceStore store, CancellationToken ct)
    {
        var row = await store.FindAsync(id, ct);
        if (row is null) return Problems.NotFound("sequence", id);
        if (!await store.CloseAsync(id, ct)) return Problems.Conflict($"Sequence {id} is already closed.");
        row = (await store.FindAsync(id, ct))!;
        return TypedResults.Ok(SequenceView.From(row, await store.MainshockChangesAsync(id, ct)));
    }

    static SequenceChoices Check(SequenceChoices c, Dictionary<string, string[]> errors, bool requireBackgroundPair)
    {
        void Range(string name, double? v, double min, double max, bool minExclusive = false)
        {
            if (v is not { } x) return;
            if (!double.IsFinite(x) || x > max || (minExclusive ? x <= min : x < min))
                errors[name] = [FormattableString.Invariant($"must be a number {(minExclusive ? "above" : "from")} {min} {(minExclusive ? "up to" : "to")} {max}")];
        }
        if (c.Name is { } name && (name.Length is 0 or > 200 || name.Any(char.IsControl)))
            errors["name"] = ["must be 1 to 200 printable characters"];
        Range("zoneMultiple", c.ZoneMultiple, 0, 20, minExclusive: true);
        Range("zoneFloorKm", c.ZoneFloorKm, 0, 1000);
        Range("zoneRadiusKm", c.ZoneRadiusKm, 0, 2000, minExclusive: true);
        Range("foreshockDays", c.ForeshockDays, 0, 365);
        Range("mc", c.Mc, -2, 10);
        Range("fitStartDays", c.FitStartDays, 0, 3650);
        Range("backgroundRatePerDay", c.BackgroundRatePerDay, 0, 1000);
        Range("backgroundMagnitude", c.BackgroundMagnitude, -2, 10);
        if (requireBackgroundPair && (c.BackgroundRatePerDay is null) != (c.BackgroundMagnitude is null))
            errors["backgroundMagnitude"] = ["backgroundRatePerDay and backgroundMagnitude go together"];
        if (c.ParameterSet is { } set && !GenericParameterSets.TryGet(set, out _))
            errors["parameterSet"] = [$"is not a known set; known: {string.Join(", ", GenericParameterSets.All.Select(s => s.Name))}"];
        return c;
    }
}
