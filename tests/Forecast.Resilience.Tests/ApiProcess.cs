using System.Diagnostics;
using System.Net;
using System.Net.Http.Headers;
using System.Net.Sockets;

namespace Forecast.Resilience.Tests;

/// <summary>The real API as a child process: <c>dotnet Forecast.Api.dll</c> from beside the tests (the project
/// reference copies it there, under script/test's bin/Release layout and under an --artifacts-path layout alike),
/// on a free loopback port, with its console log captured.</summary>
sealed class ApiProcess : IAsyncDisposable
{
    public const string AdminKey = "resilience-bootstrap-admin-key-0123456789abcdef";

    readonly Process _process;
    readonly List<string> _log = [];

    ApiProcess(Process process, Uri baseAddress)
    {
        _process = process;
        BaseAddress = baseAddress;
    }

    public Uri BaseAddress { get; }

    public bool HasExited => _process.HasExited;

    /// <summary>Starts the API and waits until it answers /health/live.</summary>
    /// <param name="settings">Configuration as environment variables (Section__Key).</param>
    public static async Task<ApiProcess> StartAsync(string connectionString, IReadOnlyDictionary<string, string>? settings = null)
    {
        var dll = Path.Combine(AppContext.BaseDirectory, "Forecast.Api.dll");
        if (!File.Exists(dll)) throw new FileNotFoundException("Forecast.Api.dll is not beside the tests", dll);
        var port = FreePort();
        var start = new ProcessStartInfo("dotnet")
        {
            // The content root (appsettings.json) is the working directory.
            WorkingDirectory = AppContext.BaseDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(dll);
        start.Environment["ASPNETCORE_URLS"] = $"http://127.0.0.1:{port}";
        start.Environment["ASPNETCORE_ENVIRONMENT"] = "Production";
        start.Environment["DOTNET_ENVIRONMENT"] = "Production";
        start.Environment["ConnectionStrings__Forecast"] = connectionString;
        start.Environment["Forecast__BootstrapAdminKey"] = AdminKey;
        start.Environment["Logging__Console__FormatterName"] = "simple";
        foreach (var (k, v) in settings ?? new Dictionary<string, string>()) start.Environment[k] = v;

        var process = new Process { StartInfo = start };
        var api = new ApiProcess(process, new Uri($"http://127.0.0.1:{port}"));
        process.OutputDataReceived += (_, e) => api.Append(e.Data);
        process.ErrorDataReceived += (_, e) => api.Append(e.Data);
        process.Start();
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        try
        {
            using var client = api.Client();
            await api.WaitForAsync("the API to answer /health/live", TimeSpan.FromSeconds(60), async () =>
            {
                if (process.HasExited) throw new InvalidOperationException($"The API exited with {process.ExitCode}.\n{api.Log}");
                try
                {
                    return (await client.GetAsync("/health/live")).StatusCode == HttpStatusCode.OK;
                }
                catch (HttpRequestException)
                {
                    return false;
                }
            });
        }
        catch
        {
            await api.DisposeAsync();
            throw;
        }
        return api;
    }

    /// <summary>The console output so far.</summary>
    public string Log
    {
        get
        {
            lock (_log) return string.Join('\n', _log);
        }
    }

    /// <summary>SIGKILL (Process.Kill sends it on Unix): no shutdown code runs, open transactions are cut off.</summary>
    public async Task KillAsync()
    {
        _process.Kill();
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        await _process.WaitForExitAsync(timeout.Token);
    }

    public HttpClient Client(string? key = AdminKey)
    {
        var client = new HttpClient { BaseAddress = BaseAddress, Timeout = TimeSpan.FromSeconds(60) };
        if (key is not null) client.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return client;
    }

    /// <summary>Polls <paramref name="condition"/> every 100 ms until it holds; fails with the API log at the deadline.</summary>
    public async Task WaitForAsync(string what, TimeSpan deadline, Func<Task<bool>> condition)
    {
        var clock = Stopwatch.StartNew();
        while (!await condition())
        {
            if (clock.Elapsed > deadline)
                throw new TimeoutException($"Waited {deadline.TotalSeconds:0} s for {what}. API log (last lines):\n{Tail(80)}");
            await Task.Delay(100);
        }
    }

    public string Tail(int lines)
    {
        lock (_log) return string.Join('\n', _log.Skip(Math.Max(0, _log.Count - lines)));
    }

    public async ValueTask DisposeAsync()
    {
        try
        {
            if (!_process.HasExited)
            {
                _process.Kill(entireProcessTree: true);
                await _process.WaitForExitAsync(new CancellationTokenSource(TimeSpan.FromSeconds(30)).Token);
            }
        }
        catch (InvalidOperationException)
        {
            // never started
        }
        _process.Dispose();
    }

    void Append(string? line)
    {
        if (line is null) return;
        lock (_log) _log.Add(line);
    }

    public static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }
}
