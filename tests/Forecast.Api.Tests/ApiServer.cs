using System.Net.Http.Headers;
using System.Net.Http.Json;
using Forecast.Tests.Shared;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;

namespace Forecast.Api.Tests;

/// <summary>The real API on Kestrel (a loopback port, real HTTP) over a fresh migrated PostgreSQL database.</summary>
/// <remarks>The database comes from <see cref="TestDatabase"/>; the connection string is handed over with
/// UseSetting because Program.cs reads it before the host is built.</remarks>
public class ApiServer : IAsyncLifetime
{
    public const string AdminKey = "test-bootstrap-admin-key-0123456789abcdef";

    readonly TestDatabase _db = new();
    WebApplicationFactory<Program>? _factory;

    public string ConnectionString => _db.ConnectionString;
    public Uri BaseAddress { get; private set; } = null!;

    /// <summary>Settings a derived fixture adds or overrides (configuration keys as in appsettings.json).</summary>
    protected virtual IReadOnlyDictionary<string, string> Settings => new Dictionary<string, string>();

    /// <summary>Anything else a derived fixture changes on the host (for example a logger provider).</summary>
    protected virtual void ConfigureHost(IWebHostBuilder builder)
    {
    }

    /// <summary>The running host's services (for example its EndpointDataSource).</summary>
    public IServiceProvider Services => _factory?.Services ?? throw new InvalidOperationException("Not started.");

    public async Task InitializeAsync()
    {
        await _db.InitializeAsync();
        _factory = new WebApplicationFactory<Program>().WithWebHostBuilder(b =>
        {
            b.UseSetting("ConnectionStrings:Forecast", _db.ConnectionString);
            b.UseSetting("Forecast:BootstrapAdminKey", AdminKey);
            b.UseSetting("Logging:LogLevel:Default", "Warning");
            foreach (var (k, v) in Settings) b.UseSetting(k, v);
            b.UseEnvironment("Production");
            ConfigureHost(b);
        });
        _factory.UseKestrel(k => k.Listen(System.Net.IPAddress.Loopback, 0));
        _factory.StartServer();
        using var probe = _factory.CreateClient();
        BaseAddress = probe.BaseAddress!;
    }

    public async Task DisposeAsync()
    {
        if (_factory is not null) await _factory.DisposeAsync();
        await _db.DisposeAsync();
    }

    /// <summary>A client over real HTTP, with the key when given.</summary>
    public HttpClient Client(string? key = null)
    {
        var client = new HttpClient { BaseAddress = BaseAddress };
        if (key is not null) client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return client;
    }

    /// <summary>Creates a key of the role through the admin endpoint and returns its secret.</summary>
    public async Task<string> NewKeyAsync(string role, string name = "test")
    {
        using var admin = Client(AdminKey);
        var response = await admin.PostAsJsonAsync("/v1/keys", new { name, role });
        response.EnsureSuccessStatusCode();
        var body = await response.Content.ReadFromJsonAsync<System.Text.Json.JsonElement>();
        return body.GetProperty("key").GetString()!;
    }
}
