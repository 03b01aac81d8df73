using System.Net;
using System.Text.Json;
using Npgsql;

namespace Forecast.Api.Tests.Stress;

/// <summary>Checks shared by the stress suites: an answer is a problem, the database did not change.</summary>
public static class StressChecks
{
    /// <summary>Asserts an RFC 9457 problem answer with the status and returns its body.</summary>
    public static async Task<JsonElement> ProblemAsync(HttpResponseMessage response, int status, string context)
    {
        var text = await response.Content.ReadAsStringAsync();
        Assert.True((int)response.StatusCode == status,
            $"{context}: expected {status}, got {(int)response.StatusCode}: {text[..Math.Min(600, text.Length)]}");
        // RFC 9457, 3: the media type application/problem+json.
        Assert.True(response.Content.Headers.ContentType?.MediaType == "application/problem+json",
            $"{context}: content type '{response.Content.Headers.ContentType}', body: {text[..Math.Min(300, text.Length)]}");
        using var doc = JsonDocument.Parse(text);
        var problem = doc.RootElement.Clone();
        Assert.Equal(JsonValueKind.Object, problem.ValueKind);
        // RFC 9457, 3.1.1 type (a URI reference), 3.1.2 status (the same as the HTTP status), 3.1.4 title.
        Assert.False(string.IsNullOrEmpty(problem.GetProperty("type").GetString()), $"{context}: no type");
        Assert.Equal(status, problem.GetProperty("status").GetInt32());
        Assert.False(string.IsNullOrWhiteSpace(problem.GetProperty("title").GetString()), $"{context}: no title");
        return problem;
    }

    /// <summary>A digest of every row of every table but the migration journal: equal digests, nothing changed.
    /// </summary>
    public static async Task<string> FingerprintAsync(string connectionString)
    {
        await using var conn = new NpgsqlConnection(connectionString);
        await conn.OpenAsync();
        var tables = new List<string>();
        await using (var list = new NpgsqlCommand(
            "select tablename from pg_tables where schemaname = 'public' and tablename <> 'schemaversions' " +
            "and tablename <> 'schema_migrations' order by tablename", conn))
        await using (var reader = await list.ExecuteReaderAsync())
        {
            while (await reader.ReadAsync()) tables.Add(reader.GetString(0));
        }
        Assert.NotEmpty(tables);
        var parts = new List<string>();
        foreach (var table in tables)
        {
            // Table names come from the catalog itself; quote_ident guards them anyway.
            await using var digest = new NpgsqlCommand(
                $"select count(*)::text || ':' || coalesce(md5(string_agg(t::text, ',' order by t::text)), '') " +
                $"from public.\"{table.Replace("\"", "\"\"", StringComparison.Ordinal)}\" t", conn);
            parts.Add($"{table}={await digest.ExecuteScalarAsync()}");
        }
        return string.Join("; ", parts);
    }

    public static async Task AssertReadyAsync(ApiServer api, string context)
    {
        using var client = api.Client();
        var ready = await client.GetAsync("/health/ready");
        Assert.True(ready.StatusCode == HttpStatusCode.OK, $"{context}: /health/ready answered {(int)ready.StatusCode}");
    }
}
