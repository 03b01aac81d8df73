using DbUp;
using DbUp.Engine.Output;
using Npgsql;

namespace Forecast.Storage;

/// <summary>Applies the SQL migrations of <c>db/migrations</c> (embedded in this assembly) with DbUp.</summary>
public static class Migrator
{
    // Any constant works; it only has to be the same for every instance of the service.
    const long AdvisoryLockKey = 0x466f7265_63617374; // "Forecast"

    /// <summary>Applies pending migrations in name order; returns the names applied.</summary>
    /// <remarks>Holds a PostgreSQL advisory lock meanwhile, so several instances starting at once migrate once.</remarks>
    public static IReadOnlyList<string> Apply(string connectionString, Action<string>? log = null)
    {
        using var lockConnection = new NpgsqlConnection(connectionString);
        lockConnection.Open();
        using (var take = new NpgsqlCommand("select pg_advisory_lock(@k)", lockConnection))
        {
            take.Parameters.AddWithValue("k", AdvisoryLockKey);
            take.ExecuteNonQuery();
        }
        try
        {
            var upgrader = DeployChanges.To
                .PostgresqlDatabase(connectionString)
                .WithScriptsEmbeddedInAssembly(typeof(Migrator).Assembly,
                    name => name.StartsWith("migrations.", StringComparison.Ordinal))
                .WithTransactionPerScript()
                .JournalToPostgresqlTable("public", "schema_migrations")
                .LogTo(new Log(log))
                .Build();
            var result = upgrader.PerformUpgrade();
            if (!result.Successful)
            {
                throw new InvalidOperationException(
                    $"Migration {result.ErrorScript?.Name} failed: {result.Error?.Message}", result.Error);
            }
            return result.Scripts.Select(s => s.Name).ToList();
        }
        finally
        {
            using var release = new NpgsqlCommand("select pg_advisory_unlock(@k)", lockConnection);
            release.Parameters.AddWithValue("k", AdvisoryLockKey);
            release.ExecuteNonQuery();
        }
    }

    sealed class Log(Action<string>? sink) : IUpgradeLog
    {
        public void LogTrace(string format, params object[] args) { }
        public void LogDebug(string format, params object[] args) { }
        public void LogInformation(string format, params object[] args) => sink?.Invoke(Format(format, args));
        public void LogWarning(string format, params object[] args) => sink?.Invoke(Format(format, args));
        public void LogError(string format, params object[] args) => sink?.Invoke(Format(format, args));
        public void LogError(Exception ex, string format, params object[] args) => sink?.Invoke(Format(format, args));
        static string Format(string format, object[] args) =>
            string.Format(System.Globalization.CultureInfo.InvariantCulture, format, args);
    }
}
