using System.Security.Claims;
using System.Text.Encodings.Web;
using Forecast.Api.Infrastructure;
using Forecast.Storage.Keys;
using Microsoft.AspNetCore.Authentication;
using Microsoft.Extensions.Caching.Memory;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Auth;

/// <summary>Names of the authorization policies; each role includes the roles below it.</summary>
public static class Policies
{
    public const string Scheme = "ApiKey";
    public const string Feeder = "feeder";
    public const string Analyst = "analyst";
    public const string Admin = "admin";

    public static void Add(Microsoft.AspNetCore.Authorization.AuthorizationBuilder auth) => auth
        .AddPolicy(Feeder, p => p.RequireRole("feeder", "analyst", "admin"))
        .AddPolicy(Analyst, p => p.RequireRole("analyst", "admin"))
        .AddPolicy(Admin, p => p.RequireRole("admin"));

    /// <summary>The roles a policy admits, in words, e.g. "analyst or admin".</summary>
    public static string Admits(string policy) => policy switch
    {
        Feeder => "feeder, analyst or admin",
        Analyst => "analyst or admin",
        _ => policy,
    };

    public static long? KeyId(ClaimsPrincipal user) =>
        long.TryParse(user.FindFirstValue(ClaimTypes.NameIdentifier), out var id) ? id : null;
}

/// <summary>Finds active keys by secret, remembering answers for a few seconds.</summary>
/// <remarks>A revocation through this instance takes effect at once; other instances see it within
/// <see cref="Lifetime"/>.</remarks>
public sealed class ApiKeyCache(ApiKeyStore store, IMemoryCache cache)
{
    public static readonly TimeSpan Lifetime = TimeSpan.FromSeconds(10);

    public async Task<ApiKeyRow?> FindAsync(string secret, CancellationToken ct)
    {
        var cacheKey = CacheKey(secret);
        if (cache.TryGetValue(cacheKey, out ApiKeyRow? row)) return row;
        row = await store.FindActiveAsync(secret, ct);
        if (row is not null) cache.Set(cacheKey, row, Lifetime);
        return row;
    }

    public void ForgetAll() => (cache as MemoryCache)?.Clear();

    static string CacheKey(string secret) => "key:" + Convert.ToHexString(ApiKeyStore.Hash(secret));
}

/// <summary>Reads <c>Authorization: Bearer &lt;key&gt;</c>; answers 401 and 403 as problem details.</summary>
public sealed class ApiKeyHandler(
    IOptionsMonitor<AuthenticationSchemeOptions> options, ILoggerFactory logger, UrlEncoder encoder, ApiKeyCache keys)
    : AuthenticationHandler<AuthenticationSchemeOptions>(options, logger, encoder)
{
    const string FailureItem = "forecast.auth.failure";

    protected override async Task<AuthenticateResult> HandleAuthenticateAsync()
    {
        var header = Request.Headers.Authorization.ToString();
        if (string.IsNullOrEmpty(header)) return AuthenticateResult.NoResult();

        const string bearer = "Bearer ";
        if (!header.StartsWith(bearer, StringComparison.OrdinalIgnoreCase))
            return Fail("The Authorization header must be 'Bearer <key>'.");
        var secret = header[bearer.Length..].Trim();
        if (!LooksLikeKey(secret)) return Fail("The key is malformed: keys are 32 to 256 letters, digits, '-' and '_'.");

        var row = await keys.FindAsync(secret, Context.RequestAborted);
        if (row is null) return Fail("The key is unknown or has been revoked.");

        var identity = new ClaimsIdentity(
        [
            new Claim(ClaimTypes.NameIdentifier, row.Id.ToString(System.Globalization.CultureInfo.InvariantCulture)),
            new Claim(ClaimTypes.Name, row.Name),
            new Claim(ClaimTypes.Role, row.Role),
        ], Scheme.Name);
        return AuthenticateResult.Success(new AuthenticationTicket(new ClaimsPrincipal(identity), Scheme.Name));
    }

    AuthenticateResult Fail(string why)
    {
        Context.Items[FailureItem] = why;
        return AuthenticateResult.Fail(why);
    }

    // Generated keys are "fk_" and 43 base64url characters; an operator's bootstrap key may be any
    // 32 to 256 base64url characters. Anything else is refused before a database lookup.
    static bool LooksLikeKey(string s) =>
        s.Length is >= 32 and <= 256 && s.AsSpan().IndexOfAnyExcept(Base64UrlChars) < 0;

    static readonly System.Buffers.SearchValues<char> Base64UrlChars = System.Buffers.SearchValues.Create(
        "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_");

    // RFC 6750, 3 and 3.1: a bare challenge when no key was sent, error="invalid_token" for a malformed, unknown
    // or revoked one, error="insufficient_scope" (with 403) for a valid key whose role is not enough. The problem
    // body says why; the header carries no text of the request.
    protected override Task HandleChallengeAsync(AuthenticationProperties properties)
    {
        var why = Context.Items[FailureItem] as string;
        Response.Headers.WWWAuthenticate = why is null ? "Bearer" : "Bearer error=\"invalid_token\"";
        return Write(Problems.Unauthorized(why ?? "Send 'Authorization: Bearer <key>'."));
    }

    protected override Task HandleForbiddenAsync(AuthenticationProperties properties)
    {
        Response.Headers.WWWAuthenticate = "Bearer error=\"insufficient_scope\"";
        var needed = Context.GetEndpoint()?.Metadata.GetOrderedMetadata<Microsoft.AspNetCore.Authorization.IAuthorizeData>()
            .Select(a => a.Policy).LastOrDefault(p => p is not null);
        var role = Context.User.FindFirstValue(ClaimTypes.Role) ?? "(none)";
        return Write(Problems.Forbidden(needed is null
            ? $"The key's role, {role}, does not allow this request."
            : $"This request needs a key of role {Policies.Admits(needed)}; this key's role is {role}."));
    }

    Task Write(Microsoft.AspNetCore.Http.HttpResults.ProblemHttpResult problem) => problem.ExecuteAsync(Context);
}
