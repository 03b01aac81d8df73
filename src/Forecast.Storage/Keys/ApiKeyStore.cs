using System.Security.Cryptography;
using System.Text;
using Dapper;
using Npgsql;

namespace Forecast.Storage.Keys;

/// <summary>The roles an API key can have; each includes the ones before it.</summary>
public enum Role { Feeder = 1, Analyst = 2, Admin = 3 }

public sealed record ApiKeyRow(long Id, string Name, string Role, string Prefix, DateTime CreatedAt, DateTime? RevokedAt);

public sealed record CreatedKey(ApiKeyRow Row, string Secret);

/// <summary>API keys: random, shown once, stored as SHA-256 hashes only.</summary>
/// <remarks>
/// A key is 32 random bytes (256 bits), so a fast hash is enough: nothing short of the key itself can be
/// guessed from it, and a slow password hash would only add latency to every request.
/// </remarks>
public sealed class ApiKeyStore(NpgsqlDataSource db)
{
    public const string KeyPrefix = "fk_";

    public static string RoleName(Role role) => role.ToString().ToLowerInvariant();

    public static Role? ParseRole(string? name) => name switch
    {
        "feeder" => Role.Feeder,
        "analyst" => Role.Analyst,
        "admin" => Role.Admin,
        _ => null,
    };

    public static byte[] Hash(string secret) => SHA256.HashData(Encoding.UTF8.GetBytes(secret));

    public static string NewSecret() =>
        KeyPrefix + Convert.ToBase64String(RandomNumberGenerator.GetBytes(32))
            .TrimEnd('=').Replace('+', '-').Replace('/', '_');

    public async Task<CreatedKey> CreateAsync(string name, Role role, CancellationToken ct) =>
        await InsertAsync(name, role, NewSecret(), ct);

    /// <summary>Registers a key chosen by the operator (the bootstrap admin key) when no admin key exists yet.</summary>
    /// <returns>The new row, or null when an active admin key already exists.</returns>
    public async Task<ApiKeyRow?> BootstrapAdminAsync(string secret, CancellationToken ct)
    {
        const string sql = """
            insert into api_key (name, role, prefix, secret_hash)
            select 'bootstrap admin', 'admin', @prefix, @hash
            where not exists (select 1 from api_key where role = 'admin' and revoked_at is null)
            on conflict (secret_hash) do nothing
            returning id, name, role, prefix, created_at, revoked_at
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<ApiKeyRow>(new CommandDefinition(sql,
            new { prefix = Prefix(secret), hash = Hash(secret) }, cancellationToken: ct));
    }

    async Task<CreatedKey> InsertAsync(string name, Role role, string secret, CancellationToken ct)
    {
        const string sql = """
            insert into api_key (name, role, prefix, secret_hash) values (@name, @role, @prefix, @hash)
            returning id, name, role, prefix, created_at, revoked_at
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        var row = await conn.QuerySingleAsync<ApiKeyRow>(new CommandDefinition(sql,
            new { name, role = RoleName(role), prefix = Prefix(secret), hash = Hash(secret) }, cancellationToken: ct));
        return new CreatedKey(row, secret);
    }

    /// <summary>The active key whose secret is <paramref name="secret"/>, or null.</summary>
    public async Task<ApiKeyRow?> FindActiveAsync(string secret, CancellationToken ct)
    {
        const string sql = """
            select id, name, role, prefix, created_at, revoked_at
            from api_key where secret_hash = @hash and revoked_at is null
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<ApiKeyRow>(
            new CommandDefinition(sql, new { hash = Hash(secret) }, cancellationToken: ct));
    }

    public async Task<IReadOnlyList<ApiKeyRow>> ListAsync(CancellationToken ct)
    {
        const string sql = "select id, name, role, prefix, created_at, revoked_at from api_key order by id";
        await using var conn = await db.OpenConnectionAsync(ct);
        return (await conn.QueryAsync<ApiKeyRow>(new CommandDefinition(sql, cancellationToken: ct))).AsList();
    }

    /// <summary>One key by id, revoked or not (without its secret, which is never stored), or null.</summary>
    public async Task<ApiKeyRow?> FindAsync(long id, CancellationToken ct)
    {
        const string sql = "select id, name, role, prefix, created_at, revoked_at from api_key where id = @id";
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<ApiKeyRow>(new CommandDefinition(sql, new { id }, cancellationToken: ct));
    }

    /// <summary>Revokes a key; returns the row (already revoked ones keep their first revocation time), or null.</summary>
    public async Task<ApiKeyRow?> RevokeAsync(long id, CancellationToken ct)
    {
        const string sql = """
            update api_key set revoked_at = coalesce(revoked_at, now()) where id = @id
            returning id, name, role, prefix, created_at, revoked_at
            """;
        await using var conn = await db.OpenConnectionAsync(ct);
        return await conn.QuerySingleOrDefaultAsync<ApiKeyRow>(new CommandDefinition(sql, new { id }, cancellationToken: ct));
    }

    // "fk_" plus six characters: enough to tell keys apart in a listing, far too little to guess the rest.
    static string Prefix(string secret) => secret.Length <= 9 ? secret[..Math.Min(3, secret.Length)] : secret[..9];
}
