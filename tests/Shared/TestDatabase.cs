using System.Net.Sockets;
using Forecast.Storage;
using Npgsql;
using Testcontainers.PostgreSql;

namespace Forecast.Tests.Shared;

/// <summary>A fresh, migrated PostgreSQL database for one test class, dropped afterwards.</summary>
/// <remarks>
/// Where it comes from, in order: FORECAST_TEST_DB (a server connection string; script/test sets it to the
/// throwaway cluster it starts), else a Testcontainers PostgreSQL when a Docker engine answers, else an
/// immediate failure that says how to run the tests. A missing database fails; it never skips.
/// </remarks>
public sealed class TestDatabase : IAsyncLifetime
{
    public const string EnvironmentVariable = "FORECAST_TEST_DB";

    PostgreSqlContainer? _container;
    string? _serverConnectionString;
    string _name = "";

    public string ConnectionString { get; private set; } = "";

    public async Task InitializeAsync()
    {
        _serverConnectionString = Environment.GetEnvironmentVariable(EnvironmentVariable);
        if (string.IsNullOrWhiteSpace(_serverConnectionString))
        {
            if (!DockerAnswers())
            {
                throw new InvalidOperationException(
                    $"No test database: {EnvironmentVariable} is not set and no Docker engine answers. " +
                    "Run the tests with script/test, which starts a throwaway PostgreSQL cluster.");
            }
            _container = new PostgreSqlBuilder("postgres:15-alpine").Build();
            await _container.StartAsync();
            _serverConnectionString = _container.GetConnectionString();
        }

        _name = "forecast_" + Guid.NewGuid().ToString("N")[..16];
        await using (var admin = new NpgsqlConnection(_serverConnectionString))
        {
            await admin.OpenAsync();
            await using var create = new NpgsqlCommand($"create database {_name}", admin);
            await create.ExecuteNonQueryAsync();
        }
        ConnectionString = new NpgsqlConnectionStringBuilder(_serverConnectionString) { Database = _name }.ConnectionString;
        Migrator.Apply(ConnectionString);
    }

    public async Task DisposeAsync()
    {
        NpgsqlConnection.ClearAllPools();
        if (_container is not null)
        {
            await _container.DisposeAsync();
            return;
        }
        if (string.IsNullOrEmpty(_name) || string.IsNullOrEmpty(ConnectionString)) return;
        await using var admin = new NpgsqlConnection(_serverConnectionString);
        await admin.OpenAsync();
        await using var drop = new NpgsqlCommand($"drop database if exists {_name} with (force)", admin);
        await drop.ExecuteNonQueryAsync();
    }

    static bool DockerAnswers()
    {
        var host = Environment.GetEnvironmentVariable("DOCKER_HOST");
        if (!string.IsNullOrEmpty(host)) return true;
        const string socket = "/var/run/docker.sock";
        if (!File.Exists(socket)) return false;
        try
        {
            using var s = new Socket(AddressFamily.Unix, SocketType.Stream, ProtocolType.Unspecified);
            s.Connect(new UnixDomainSocketEndPoint(socket));
            return true;
        }
        catch (SocketException)
        {
            return false;
        }
    }
}
