using System.Diagnostics;
using Npgsql;

namespace Forecast.Resilience.Tests;

/// <summary>A PostgreSQL cluster of the test's own, in a temporary folder on a free port, that the test may stop
/// and start again (the data folder is kept, so the data survive); removed on dispose, running or not.</summary>
/// <remarks>Same commands as script/lib.sh's start_cluster (throwaway settings: fsync off). PostgreSQL refuses to
/// run as root, so as root every command runs through <c>runuser -u postgres</c> from "/".</remarks>
sealed class PostgresCluster : IAsyncDisposable
{
    readonly string _dir;
    readonly string _bin;

    PostgresCluster(string dir, string bin, int port)
    {
        _dir = dir;
        _bin = bin;
        Port = port;
    }

    public int Port { get; }

    string Data => Path.Combine(_dir, "data");

    public string ConnectionString(string database) =>
        $"Host=127.0.0.1;Port={Port};Username=postgres;Database={database};Timeout=5;Command Timeout=30";

    /// <summary>initdb, start, and create <paramref name="database"/>.</summary>
    public static async Task<PostgresCluster> CreateAsync(string database)
    {
        var dir = Directory.CreateTempSubdirectory("forecast-resilience-pg-").FullName;
        if (!OperatingSystem.IsWindows()) File.SetUnixFileMode(dir, (UnixFileMode)0b111_101_101); // postgres must enter it
        var cluster = new PostgresCluster(dir, BinDirectory(), ApiProcess.FreePort());
        try
        {
            if (Environment.IsPrivilegedProcess)
            {
                if (Run("id", "postgres").ExitCode != 0)
                    Check(Run("useradd", "--system", "--home-dir", "/var/lib/postgresql", "--shell", "/bin/bash", "postgres"));
                Check(Run("chown", "postgres", dir));
            }
            Check(cluster.AsPostgres("initdb", "-D", cluster.Data, "-U", "postgres", "--auth=trust", "-E", "UTF8",
                "--locale=C.UTF-8", "--no-sync"));
            cluster.Start();
            await using var conn = new NpgsqlConnection(cluster.ConnectionString("postgres"));
            await conn.OpenAsync();
            await using var create = new NpgsqlCommand($"create database {database}", conn);
            await create.ExecuteNonQueryAsync();
        }
        catch
        {
            await cluster.DisposeAsync();
            throw;
        }
        return cluster;
    }

    public void Start() => Check(AsPostgres("pg_ctl", "-D", Data, "-l", Path.Combine(_dir, "server.log"), "-w", "-t", "60",
        "-o", $"-c listen_addresses=127.0.0.1 -p {Port} -k {_dir} -c fsync=off -c synchronous_commit=off -c full_page_writes=off",
        "start"));

    /// <summary>Fast shutdown: sessions are terminated, open transactions roll back, a checkpoint keeps the data.</summary>
    public void Stop() => Check(AsPostgres("pg_ctl", "-D", Data, "-m", "fast", "-w", "-t", "60", "stop"));

    public ValueTask DisposeAsync()
    {
        if (File.Exists(Path.Combine(Data, "postmaster.pid")))
            AsPostgres("pg_ctl", "-D", Data, "-m", "immediate", "-w", "-t", "60", "stop");
        try
        {
            Directory.Delete(_dir, recursive: true);
        }
        catch (IOException)
        {
            // best effort: a temp folder left behind must not fail the test
        }
        catch (UnauthorizedAccessException)
        {
        }
        return ValueTask.CompletedTask;
    }

    (int ExitCode, string Output) AsPostgres(string tool, params string[] args)
    {
        var exe = Path.Combine(_bin, tool);
        return Environment.IsPrivilegedProcess ? Run("runuser", ["-u", "postgres", "--", exe, .. args]) : Run(exe, args);
    }

    static (int ExitCode, string Output) Run(string file, params string[] args)
    {
        var start = new ProcessStartInfo(file)
        {
            RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false, WorkingDirectory = "/",
        };
        foreach (var a in args) start.ArgumentList.Add(a);
        using var p = Process.Start(start)!;
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        if (!p.WaitForExit(TimeSpan.FromSeconds(120)))
        {
            p.Kill(entireProcessTree: true);
            throw new TimeoutException($"{file} {string.Join(' ', args)} did not finish in 2 minutes");
        }
        return (p.ExitCode, $"{file} {string.Join(' ', args)}: exit {p.ExitCode}\n{stdout.Result}{stderr.Result}");
    }

    static void Check((int ExitCode, string Output) run)
    {
        if (run.ExitCode != 0) throw new InvalidOperationException(run.Output);
    }

    /// <summary>Where initdb and pg_ctl live: on PATH, else the newest /usr/lib/postgresql/N/bin (as script/lib.sh).</summary>
    static string BinDirectory()
    {
        foreach (var d in (Environment.GetEnvironmentVariable("PATH") ?? "").Split(':', StringSplitOptions.RemoveEmptyEntries))
        {
            var initdb = Path.Combine(d, "initdb");
            if (File.Exists(initdb) && File.Exists(Path.Combine(d, "pg_ctl")))
                return Path.GetDirectoryName(new FileInfo(initdb).ResolveLinkTarget(returnFinalTarget: true)?.FullName ?? initdb)!;
        }
        var candidates = Directory.Exists("/usr/lib/postgresql")
            ? Directory.GetDirectories("/usr/lib/postgresql").Select(v => Path.Combine(v, "bin"))
                .Where(b => File.Exists(Path.Combine(b, "initdb")))
                .OrderByDescending(b => int.TryParse(Path.GetFileName(Path.GetDirectoryName(b)), out var n) ? n : 0).ToList()
            : [];
        return candidates.FirstOrDefault() ?? throw new InvalidOperationException(
            "PostgreSQL binaries (initdb, pg_ctl) not found; run the tests with script/test, which installs them.");
    }
}
