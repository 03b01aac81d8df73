using System.CommandLine;
using Forecast.Storage;
using Forecast.Storage.Keys;
using Npgsql;

namespace Forecast.Cli;

/// <summary><c>forecast migrate</c> and <c>forecast keys ...</c>: database chores for operators.</summary>
static class DatabaseCommands
{
    public const string ConnectionEnvironmentVariable = "ConnectionStrings__Forecast";

    public static Option<string?> ConnectionOption() => new("--connection")
    {
        Description = $"PostgreSQL connection string (default: ${ConnectionEnvironmentVariable})",
    };

    public static string ConnectionString(ParseResult parse, Option<string?> option) =>
        parse.GetValue(option) ?? Environment.GetEnvironmentVariable(ConnectionEnvironmentVariable)
        ?? throw new CliException($"No database: pass --connection or set {ConnectionEnvironmentVariable}.");

    public static Command Migrate()
    {
        var connection = ConnectionOption();
        var command = new Command("migrate", "Apply pending database migrations (db/migrations)") { connection };
        command.SetAction(parse => CliException.Guard(() =>
        {
            var applied = Migrator.Apply(ConnectionString(parse, connection));
            Console.WriteLine(applied.Count == 0
                ? "database is up to date"
                : $"applied {applied.Count} migration(s): {string.Join(", ", applied)}");
            return 0;
        }));
        return command;
    }

    public static Command Keys()
    {
        var connection = ConnectionOption();
        var role = new Option<string>("--role") { Description = "feeder, analyst or admin", Required = true };
        var name = new Option<string>("--name") { Description = "who or what uses the key", Required = true };
        var create = new Command("create", "Create an API key and print it (shown only this once)")
        {
            connection, role, name,
        };
        create.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            var r = ApiKeyStore.ParseRole(parse.GetValue(role))
                ?? throw new CliException("--role must be feeder, analyst or admin.");
            var store = new ApiKeyStore(DataSource(parse, connection));
            var key = await store.CreateAsync(parse.GetValue(name)!, r, ct);
            Console.WriteLine(key.Secret);
            return 0;
        }));

        var list = new Command("list", "List API keys (never their secrets)") { connection };
        list.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            var store = new ApiKeyStore(DataSource(parse, connection));
            foreach (var k in await store.ListAsync(ct))
            {
                Console.WriteLine($"{k.Id,5}  {k.Role,-8} {k.Prefix}…  {k.Name}" +
                    (k.RevokedAt is { } at ? $"  (revoked {at:u})" : ""));
            }
            return 0;
        }));

        var id = new Argument<long>("id") { Description = "the key's id, as 'keys list' shows it" };
        var revoke = new Command("revoke", "Revoke an API key") { connection, id };
        revoke.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            var store = new ApiKeyStore(DataSource(parse, connection));
            var row = await store.RevokeAsync(parse.GetValue(id), ct)
                ?? throw new CliException($"No key {parse.GetValue(id)}.");
            Console.WriteLine($"revoked key {row.Id} ({row.Name})");
            return 0;
        }));

        return new Command("keys", "Manage API keys") { create, list, revoke };
    }

    public static NpgsqlDataSource DataSource(ParseResult parse, Option<string?> connection)
    {
        StorageDefaults.Apply();
        return NpgsqlDataSource.Create(ConnectionString(parse, connection));
    }
}

/// <summary>A failure to report to the user in one line, with exit code 1, without a stack trace.</summary>
sealed class CliException(string message) : Exception(message)
{
    public static int Guard(Func<int> body)
    {
        try
        {
            return body();
        }
        catch (Exception e) when (e is CliException or NpgsqlException or IOException or InvalidOperationException)
        {
            Console.Error.WriteLine("forecast: " + e.Message);
            return 1;
        }
    }

    public static async Task<int> GuardAsync(Func<Task<int>> body)
    {
        try
        {
            return await body();
        }
        catch (Exception e) when (e is CliException or NpgsqlException or IOException or InvalidOperationException)
        {
            await Console.Error.WriteLineAsync("forecast: " + e.Message);
            return 1;
        }
    }
}
