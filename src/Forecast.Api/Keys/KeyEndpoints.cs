using Forecast.Api.Auth;
using Forecast.Api.Infrastructure;
using Forecast.Storage.Keys;
using Microsoft.AspNetCore.Http.HttpResults;

namespace Forecast.Api.Keys;

public sealed record KeyRequest(string? Name, string? Role);

public sealed record KeyView(long Id, string Name, string Role, string Prefix, DateTime CreatedAt, DateTime? RevokedAt)
{
    public static KeyView From(ApiKeyRow r) => new(r.Id, r.Name, r.Role, r.Prefix, r.CreatedAt, r.RevokedAt);
}

/// <summary>The new key with its secret: the only time the secret is ever shown.</summary>
public sealed record NewKeyView(long Id, string Name, string Role, string Prefix, DateTime CreatedAt, string Key);

public static class KeyEndpoints
{
    public static RouteGroupBuilder MapKeys(this IEndpointRouteBuilder app)
    {
        var group = app.MapGroup("/v1/keys").WithTags("Keys").RequireAuthorization(Policies.Admin);
        group.MapPost("/", CreateKey).WithName("CreateKey").WithSummary("Create a key (the secret is shown once)");
        group.MapGet("/", ListKeys).WithName("ListKeys").WithSummary("All keys, without secrets");
        group.MapGet("/{id:long}", GetKey).WithName("GetKey").WithSummary("One key, without its secret");
        group.MapPost("/{id:long}/revoke", RevokeKey).WithName("RevokeKey").WithSummary("Revoke a key");
        return group;
    }

    static async Task<Results<Created<NewKeyView>, ValidationProblem>> CreateKey(
        KeyRequest body, ApiKeyStore store, CancellationToken ct)
    {
        var errors = new Dictionary<string, string[]>();
        var name = body.Name?.Trim();
        if (string.IsNullOrEmpty(name) || name.Length > 100 || name.Any(char.IsControl))
            errors["name"] = ["is required: 1 to 100 printable characters"];
        var role = ApiKeyStore.ParseRole(body.Role);
        if (role is null) errors["role"] = ["must be one of: feeder, analyst, admin"];
        if (errors.Count > 0) return Problems.Invalid(errors, "The key request is not valid.");

        var created = await store.CreateAsync(name!, role!.Value, ct);
        var r = created.Row;
        return TypedResults.Created($"/v1/keys/{r.Id}",
            new NewKeyView(r.Id, r.Name, r.Role, r.Prefix, r.CreatedAt, created.Secret));
    }

    static async Task<Ok<List<KeyView>>> ListKeys(ApiKeyStore store, CancellationToken ct) =>
        TypedResults.Ok((await store.ListAsync(ct)).Select(KeyView.From).ToList());

    static async Task<Results<Ok<KeyView>, ProblemHttpResult>> GetKey(long id, ApiKeyStore store, CancellationToken ct) =>
        await store.FindAsync(id, ct) is { } row ? TypedResults.Ok(KeyView.From(row)) : Problems.NotFound("key", id);

    static async Task<Results<Ok<KeyView>, ProblemHttpResult>> RevokeKey(
        long id, ApiKeyStore store, ApiKeyCache cache, CancellationToken ct)
    {
        var row = await store.RevokeAsync(id, ct);
        if (row is null) return Problems.NotFound("key", id);
        cache.ForgetAll();
        return TypedResults.Ok(KeyView.From(row));
    }
}
