using Forecast.Storage;
using Forecast.Storage.Keys;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Infrastructure;

public static class DatabaseStartup
{
    /// <summary>Applies migrations (unless switched off) and registers the bootstrap admin key when configured.</summary>
    public static async Task PrepareDatabaseAsync(this WebApplication app)
    {
        var options = app.Services.GetRequiredService<IOptions<ServiceOptions>>().Value;
        var log = app.Services.GetRequiredService<ILoggerFactory>().CreateLogger("Forecast.Startup");
        if (options.MigrateOnStart)
        {
            var connectionString = app.Configuration.GetConnectionString("Forecast")!;
            var applied = Migrator.Apply(connectionString, m => log.LogDebug("{Migration}", m));
            log.LogInformation("Migrations applied: {Count} ({Names})", applied.Count, string.Join(", ", applied));
        }
        if (!string.IsNullOrEmpty(options.BootstrapAdminKey))
        {
            var store = app.Services.GetRequiredService<ApiKeyStore>();
            var row = await store.BootstrapAdminAsync(options.BootstrapAdminKey, CancellationToken.None);
            if (row is not null) log.LogInformation("Bootstrap admin key registered as key {KeyId}", row.Id);
        }
    }
}
