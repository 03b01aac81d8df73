using System.Collections.Concurrent;
using System.Globalization;
using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Routing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;

namespace Forecast.Api.Tests.Stress;

/// <summary>Keeps every log entry of the host (all categories, from Trace up) with its state and scopes.</summary>
public sealed class CapturingLoggerProvider : ILoggerProvider, ISupportExternalScope
{
    readonly ConcurrentQueue<string> _entries = new();
    IExternalScopeProvider? _scopes;

    public IReadOnlyCollection<string> Entries => _entries;

    public ILogger CreateLogger(string categoryName) => new Logger(this, categoryName);

    public void SetScopeProvider(IExternalScopeProvider scopeProvider) => _scopes = scopeProvider;

    public void Dispose()
    {
    }

    sealed class Logger(CapturingLoggerProvider owner, string category) : ILogger
    {
        public IDisposable? BeginScope<TState>(TState state) where TState : notnull =>
            owner._scopes?.Push(state);

        public bool IsEnabled(LogLevel logLevel) => true;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception,
            Func<TState, Exception?, string> formatter)
        {
            var text = new StringBuilder().Append(category).Append(' ').Append(logLevel).Append(' ')
                .Append(formatter(state, exception)).Append(' ').Append(exception);
            Append(text, state);
            owner._scopes?.ForEachScope((scope, sb) => Append(sb.Append(" scope "), scope), text);
            owner._entries.Enqueue(text.ToString());
        }

        static void Append(StringBuilder sb, object? value)
        {
            if (value is IEnumerable<KeyValuePair<string, object?>> pairs)
                foreach (var (k, v) in pairs) sb.Append(' ').Append(k).Append('=').Append(v);
            else sb.Append(' ').Append(value);
        }
    }
}

/// <summary>The API with every log entry captured, no refit worker (so forecast states change only when a test
/// asks), and the sequences, forecasts and keys the matrix aims at.</summary>
public sealed class MatrixServer : ApiServer, IAsyncLifetime
{
    public CapturingLoggerProvider Logs { get; } = new();
    public Dictionary<string, string> Keys { get; } = [];
    public Dictionary<string, long> Sequences { get; } = [];
    public long KeyToRevoke { get; private set; }

    /// <summary>Every secret the matrix has used; none may appear in a log entry.</summary>
    public ConcurrentBag<string> Secrets { get; } = [];

    protected override IReadOnlyDictionary<string, string> Settings => new Dictionary<string, string>
    {
        ["RefitWorker:Enabled"] = "false",
        ["Forecasts:BootstrapSamples"] = "0",
        ["PublicApi:PermitLimit"] = "100000",
    };

    protected override void ConfigureHost(IWebHostBuilder builder) => builder.ConfigureLogging(l =>
    {
        l.AddProvider(Logs);
        // A rule for this provider alone wins over the Warning default the base fixture sets.
        l.AddFilter<CapturingLoggerProvider>(null, LogLevel.Trace);
    });

    public new async Task InitializeAsync()
    {
        await base.InitializeAsync();
        Keys["feeder"] = await NewKeyAsync("feeder", "matrix feeder");
        Keys["analyst"] = await NewKeyAsync("analyst", "matrix analyst");
        Keys["admin"] = AdminKey;
        using var admin = Client(AdminKey);
        var revoked = await (await admin.PostAsJsonAsync("/v1/keys", new { name = "matrix revoked", role = "admin" }))
            .Content.ReadFromJsonAsync<JsonElement>();
        Keys["revoked"] = revoked.GetProperty("key").GetString()!;
        (await admin.PostAsync($"/v1/keys/{revoked.GetProperty("id").GetInt64()}/revoke", null)).EnsureSuccessStatusCode();
        var victim = await (await admin.PostAsJsonAsync("/v1/keys", new { name = "matrix victim", role = "feeder" }))
            .Content.ReadFromJsonAsync<JsonElement>();
        KeyToRevoke = victim.GetProperty("id").GetInt64();
        Secrets.Add(victim.GetProperty("key").GetString()!);
        foreach (var k in Keys.Values) Secrets.Add(k);

        // One mainshock per sequence, 10 degrees apart (zones are tens of km), below the trigger magnitude.
        string[] names = ["main", "release", "withdraw", "close-analyst", "close-admin", "public"];
        using var feeder = Client(Keys["feeder"]);
        using var analyst = Client(Keys["analyst"]);
        var t0 = DateTime.UtcNow.AddDays(-2).ToString("yyyy-MM-ddTHH:mm:ssZ", CultureInfo.InvariantCulture);
        var events = names.Select((n, i) => Event(n, t0, 10, -170 + 10 * i))
            .Concat(AccessMatrixTests.Columns.Select((c, i) => Event("declare-" + c, t0, 30, -170 + 10 * i)));
        (await feeder.PostAsJsonAsync("/v1/events", events.ToArray())).EnsureSuccessStatusCode();
        foreach (var n in names)
        {
            var r = await analyst.PostAsJsonAsync("/v1/sequences", new { mainshock = new { source = "matrix", id = n } });
            r.EnsureSuccessStatusCode();
            Sequences[n] = (await r.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("id").GetInt64();
        }
        foreach (var (n, drafts) in new[] { ("main", 1), ("release", 2), ("withdraw", 2), ("public", 1) })
            for (var i = 0; i < drafts; i++)
                (await analyst.PostAsJsonAsync($"/v1/sequences/{Sequences[n]}/forecasts", new { })).EnsureSuccessStatusCode();
        (await analyst.PostAsync($"/v1/sequences/{Sequences["public"]}/forecasts/1/release", null)).EnsureSuccessStatusCode();
    }

    public static object Event(string id, string time, double lat, double lon) => new
    {
        id, source = "matrix", time, latitude = lat, longitude = lon, depthKm = 10.0, magnitude = 4.5,
        magnitudeType = "Mw", status = "reviewed",
    };
}

/// <summary>Every endpoint of the app against no key, a malformed key, a revoked key and each role. A matrix row
/// says who may call the endpoint and the request to send; the app's own EndpointDataSource lists the endpoints,
/// so a new endpoint without a row fails <see cref="EveryEndpointOfTheAppHasAMatrixRow"/>.</summary>
public class AccessMatrixTests(MatrixServer api) : IClassFixture<MatrixServer>
{
    /// <summary>The credentials, in the order each row sends them: refusals first, so the allowed cells find the
    /// targets untouched.</summary>
    public static readonly string[] Columns = ["none", "malformed", "revoked", "feeder", "analyst", "admin"];

    /// <summary>Who may call: the public, any valid key, or a role (each role includes those below it).</summary>
    public enum Access { Public, AnyKey, Feeder, Analyst, Admin }

    /// <summary>A row: the access rule, the status of an allowed call, and the request per column.</summary>
    public sealed record Row(Access Access, int Allowed, Func<MatrixServer, string, HttpRequestMessage> Request);

    const string MalformedKey = "fk_***not*a*key***!!!!!!!!!!!!!!!!!!!!!!!!!!!!";

    static string S(MatrixServer api, string name) => api.Sequences[name].ToString(CultureInfo.InvariantCulture);

    static HttpRequestMessage Get(string path) => new(HttpMethod.Get, path);

    static HttpRequestMessage Send(HttpMethod method, string path, object? body = null) => new(method, path)
    {
        Content = body is null ? null : JsonContent.Create(body),
    };

    /// <summary>The role whose target an allowed cell uses; refused columns aim at the analyst's target (which
    /// they must leave untouched).</summary>
    static string Target(string column) => column == "admin" ? "admin" : "analyst";

    public static readonly IReadOnlyDictionary<string, Row> Rows = new Dictionary<string, Row>
    {
        ["GET /health/live"] = new(Access.Public, 200, (_, _) => Get("/health/live")),
        ["GET /health/ready"] = new(Access.Public, 200, (_, _) => Get("/health/ready")),

        ["POST /v1/events"] = new(Access.Feeder, 201, (_, c) => Send(HttpMethod.Post, "/v1/events",
            MatrixServer.Event("posted-by-" + c, "2025-01-01T00:00:00Z", -60, -170 + 10 * Array.IndexOf(Columns, c)))),
        ["GET /v1/events"] = new(Access.AnyKey, 200, (_, _) => Get("/v1/events")),
        ["GET /v1/events/{source}/{**id}"] = new(Access.AnyKey, 200, (_, _) => Get("/v1/events/matrix/main")),

        ["POST /v1/keys"] = new(Access.Admin, 201, (_, c) => Send(HttpMethod.Post, "/v1/keys",
            new { name = "made by " + c, role = "feeder" })),
        ["GET /v1/keys"] = new(Access.Admin, 200, (_, _) => Get("/v1/keys")),
        ["GET /v1/keys/{id:long}"] = new(Access.Admin, 200, (a, _) => Get($"/v1/keys/{a.KeyToRevoke}")),
        ["POST /v1/keys/{id:long}/revoke"] = new(Access.Admin, 200, (a, _) => Send(HttpMethod.Post,
            $"/v1/keys/{a.KeyToRevoke}/revoke")),

        ["POST /v1/sequences"] = new(Access.Analyst, 201, (_, c) => Send(HttpMethod.Post, "/v1/sequences",
            new { mainshock = new { source = "matrix", id = "declare-" + c } })),
        ["GET /v1/sequences"] = new(Access.AnyKey, 200, (_, _) => Get("/v1/sequences")),
        ["GET /v1/sequences/{id:long}"] = new(Access.AnyKey, 200, (a, _) => Get($"/v1/sequences/{S(a, "main")}")),
        ["GET /v1/sequences/{id:long}/events"] = new(Access.AnyKey, 200, (a, _) => Get($"/v1/sequences/{S(a, "main")}/events")),
        ["PATCH /v1/sequences/{id:long}"] = new(Access.Analyst, 200, (a, c) => Send(HttpMethod.Patch,
            $"/v1/sequences/{S(a, "main")}", new { name = "renamed by " + c })),
        ["POST /v1/sequences/{id:long}/close"] = new(Access.Analyst, 200, (a, c) => Send(HttpMethod.Post,
            $"/v1/sequences/{S(a, "close-" + Target(c))}/close")),

        ["GET /v1/sequences/{id:long}/forecasts"] = new(Access.AnyKey, 200, (a, _) => Get($"/v1/sequences/{S(a, "main")}/forecasts")),
        ["GET /v1/sequences/{id:long}/forecasts/latest"] = new(Access.AnyKey, 200, (a, _) =>
            Get($"/v1/sequences/{S(a, "main")}/forecasts/latest")),
        ["GET /v1/sequences/{id:long}/forecasts/{number:int}"] = new(Access.AnyKey, 200, (a, _) =>
            Get($"/v1/sequences/{S(a, "main")}/forecasts/1")),
        ["POST /v1/sequences/{id:long}/forecasts"] = new(Access.Analyst, 201, (a, _) => Send(HttpMethod.Post,
            $"/v1/sequences/{S(a, "main")}/forecasts", new { })),
        // Drafts 1 and 2 of each target: the analyst's cell takes 1, the admin's 2 (a newer one, so both release).
        ["POST /v1/sequences/{id:long}/forecasts/{number:int}/release"] = new(Access.Analyst, 200, (a, c) =>
            Send(HttpMethod.Post, $"/v1/sequences/{S(a, "release")}/forecasts/{(c == "admin" ? 2 : 1)}/release")),
        ["POST /v1/sequences/{id:long}/forecasts/{number:int}/withdraw"] = new(Access.Analyst, 200, (a, c) =>
            Send(HttpMethod.Post, $"/v1/sequences/{S(a, "withdraw")}/forecasts/{(c == "admin" ? 2 : 1)}/withdraw",
                new { reason = "matrix" })),

        ["GET /v1/public/sequences"] = new(Access.Public, 200, (_, _) => Get("/v1/public/sequences")),
        ["GET /v1/public/sequences/{id:long}/forecast"] = new(Access.Public, 200, (a, _) =>
            Get($"/v1/public/sequences/{S(a, "public")}/forecast")),
        ["GET /v1/public/sequences/{id:long}/forecasts"] = new(Access.Public, 200, (a, _) =>
            Get($"/v1/public/sequences/{S(a, "public")}/forecasts")),
        ["GET /v1/public/feed.geojson"] = new(Access.Public, 200, (_, _) => Get("/v1/public/feed.geojson")),
        ["GET /v1/public/sequences/{id:long}/forecasts/{number:int}/cap"] = new(Access.Public, 200, (a, _) =>
            Get($"/v1/public/sequences/{S(a, "public")}/forecasts/1/cap")),

        ["GET /v1/public/sequences/{id:long}/dashboard"] = new(Access.Public, 200, (a, _) =>
            Get($"/v1/public/sequences/{S(a, "public")}/dashboard")),
        ["GET /v1/public/sequences/{id:long}/plots/{kind}.svg"] = new(Access.Public, 200, (a, _) =>
            Get($"/v1/public/sequences/{S(a, "public")}/plots/table.svg")),
        ["GET /v1/sequences/{id:long}/forecasts/{number:int}/dashboard"] = new(Access.Analyst, 200, (a, _) =>
            Get($"/v1/sequences/{S(a, "main")}/forecasts/1/dashboard")),
        ["GET /v1/sequences/{id:long}/forecasts/{number:int}/plots/{kind}.svg"] = new(Access.Analyst, 200, (a, _) =>
            Get($"/v1/sequences/{S(a, "main")}/forecasts/1/plots/table.svg")),
    };

    public static TheoryData<string> RowNames() => new(Rows.Keys);

    /// <summary>One endpoint and method as routing knows it, e.g. <c>POST /v1/keys/{id:long}/revoke</c>.</summary>
    public sealed record Route(string Method, string Pattern)
    {
        public string Key => $"{Method} {Pattern}";
    }

    /// <summary>Every route endpoint of the running app, one per method (an endpoint without method metadata,
    /// such as a health check, is listed as GET).</summary>
    public static IReadOnlyList<Route> Routes(IServiceProvider services) => services
        .GetRequiredService<EndpointDataSource>().Endpoints.OfType<RouteEndpoint>()
        .SelectMany(e => (e.Metadata.GetMetadata<IHttpMethodMetadata>()?.HttpMethods ?? ["GET"])
            .Select(m => new Route(m, "/" + (e.RoutePattern.RawText ?? "").Trim('/'))))
        .Distinct().OrderBy(r => r.Pattern, StringComparer.Ordinal).ThenBy(r => r.Method, StringComparer.Ordinal).ToList();

    /// <summary>What the cell must answer: the row's success, 401 without a usable key (RFC 6750, 3.1), 403 for a
    /// valid key whose role is not enough (RFC 9110, 15.5.4).</summary>
    public static int Expected(Row row, string column)
    {
        if (row.Access == Access.Public) return row.Allowed;
        if (column is "none" or "malformed" or "revoked") return 401;
        var rank = column switch { "feeder" => 1, "analyst" => 2, _ => 3 };
        var needed = row.Access switch { Access.AnyKey => 0, Access.Feeder => 1, Access.Analyst => 2, _ => 3 };
        return rank >= needed ? row.Allowed : 403;
    }

    HttpClient ClientFor(string column)
    {
        var client = api.Client();
        var header = column switch
        {
            "none" => null,
            "malformed" => "Bearer " + MalformedKey,
            _ => "Bearer " + api.Keys[column],
        };
        if (header is not null) client.DefaultRequestHeaders.TryAddWithoutValidation("Authorization", header);
        return client;
    }

    [Theory]
    [MemberData(nameof(RowNames))]
    public async Task EachCredentialGetsTheExpectedStatus(string route)
    {
        var row = Rows[route];
        var got = new List<string>();
        foreach (var column in Columns)
        {
            using var client = ClientFor(column);
            using var request = row.Request(api, column);
            Assert.Equal(route.Split(' ')[0], request.Method.Method);
            var response = await client.SendAsync(request);
            var expected = Expected(row, column);
            var context = $"{route} with {column}";
            got.Add($"{column}={(int)response.StatusCode}");
            if (expected is 401 or 403)
            {
                await StressChecks.ProblemAsync(response, expected, context);
                var challenge = string.Join(", ", response.Headers.WwwAuthenticate.Select(h => h.ToString()));
                // RFC 6750, 3: the Bearer challenge; 3.1: invalid_token for a bad key, none when no key was sent,
                // insufficient_scope for a key whose role is not enough.
                Assert.StartsWith("Bearer", challenge, StringComparison.Ordinal);
                if (column == "none") Assert.DoesNotContain("error=", challenge, StringComparison.Ordinal);
                else if (expected == 401) Assert.Contains("error=\"invalid_token\"", challenge, StringComparison.Ordinal);
                else Assert.Contains("error=\"insufficient_scope\"", challenge, StringComparison.Ordinal);
            }
            else
            {
                var text = await response.Content.ReadAsStringAsync();
                Assert.True((int)response.StatusCode == expected,
                    $"{context}: expected {expected}, got {(int)response.StatusCode}: {text[..Math.Min(400, text.Length)]}");
            }
            if (route == "POST /v1/keys" && response.StatusCode == HttpStatusCode.Created)
                api.Secrets.Add((await response.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("key").GetString()!);
        }
        Assert.Equal(Columns.Length, got.Count);
    }

    [Fact]
    public void EveryEndpointOfTheAppHasAMatrixRow()
    {
        var routes = Routes(api.Services).Select(r => r.Key).ToList();
        Assert.True(routes.Count >= Rows.Count / 2, $"only {routes.Count} endpoints found: {string.Join("; ", routes)}");
        var missing = routes.Except(Rows.Keys).ToList();
        Assert.True(missing.Count == 0, $"endpoints without a matrix row: {string.Join("; ", missing)}");
        var stale = Rows.Keys.Except(routes).ToList();
        Assert.True(stale.Count == 0, $"matrix rows for endpoints that do not exist: {string.Join("; ", stale)}");
    }

    [Fact]
    public void TheMatrixHasACellForEveryEndpointAndCredential()
    {
        var cells = Rows.SelectMany(r => Columns.Select(c => Expected(r.Value, c))).ToList();
        Assert.Equal(Rows.Count * Columns.Length, cells.Count);
        Assert.Contains(401, cells);
        Assert.Contains(403, cells);
    }

    [Fact]
    public async Task KeysNeverAppearInTheLogs()
    {
        // Requests of every kind that carry a key: refused, allowed, failed authentication, and a key creation
        // whose answer holds a new secret.
        foreach (var column in Columns)
        {
            using var client = ClientFor(column);
            await client.GetAsync("/v1/events");
            await client.GetAsync("/v1/keys");
            await client.PostAsJsonAsync("/v1/sequences/999999/forecasts", new { });
        }
        using (var admin = ClientFor("admin"))
        {
            var created = await admin.PostAsJsonAsync("/v1/keys", new { name = "log check", role = "analyst" });
            Assert.Equal(HttpStatusCode.Created, created.StatusCode);
            var secret = (await created.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("key").GetString()!;
            api.Secrets.Add(secret);
            using var fresh = api.Client(secret);
            Assert.Equal(HttpStatusCode.OK, (await fresh.GetAsync("/v1/events")).StatusCode);
        }

        var entries = api.Logs.Entries.ToList();
        // The capture must have seen these requests, or the check below proves nothing.
        Assert.Contains(entries, e => e.Contains("Request starting", StringComparison.Ordinal));
        Assert.Contains(entries, e => e.Contains("was not authenticated", StringComparison.Ordinal));
        Assert.Contains(entries, e => e.Contains("Authorization failed", StringComparison.Ordinal));
        var secrets = api.Secrets.Append(MalformedKey).Distinct().ToList();
        Assert.True(secrets.Count >= 6, $"only {secrets.Count} secrets to look for");
        foreach (var secret in secrets)
        {
            // The whole key, and its random part without the public "fk_" prefix.
            var random = secret.StartsWith("fk_", StringComparison.Ordinal) ? secret[3..] : secret;
            var leak = entries.FirstOrDefault(e => e.Contains(random, StringComparison.Ordinal));
            Assert.True(leak is null, $"a key appears in the log: {leak?[..Math.Min(300, leak.Length)]}");
        }
    }
}
