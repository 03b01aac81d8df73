using System.Net.Http.Json;
using System.Text.Json;
using Forecast.Api.Tests.Sequences;
using Forecast.Core;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;
using PuppeteerSharp;

namespace Forecast.Api.Tests.Dashboard;

/// <summary>The test server with a generous public rate limit (the pages poll every second in these tests) and
/// no automatic sequences (the tests declare theirs).</summary>
public sealed class DashboardServer : SequenceApiServer
{
    protected override IReadOnlyDictionary<string, string> ExtraSettings => new Dictionary<string, string>
    {
        ["PublicApi:PermitLimit"] = "100000",
        ["Sequences:TriggerMagnitude"] = "9.9",
    };
}

/// <summary>The server, two seeded exercise sequences from the project's simulator (one released, one for live
/// updates) and one headless Debian Chromium for the whole class.</summary>
public sealed class DashboardFixture : IAsyncLifetime
{
    public const string Chromium = "/usr/bin/chromium";

    public DashboardServer Api { get; } = new();
    public IBrowser Browser { get; private set; } = null!;
    public string AnalystKey { get; private set; } = "";
    public string FeederKey { get; private set; } = "";
    /// <summary>Released forecast 1, then a newer draft (so the analyst page has something to release).</summary>
    public long MainId { get; private set; }
    public int MainEventCount { get; private set; }
    /// <summary>Released once; the live-update test releases a newer (hindcast, so stale) forecast of it.</summary>
    public long LiveId { get; private set; }

    public async Task InitializeAsync()
    {
        await Api.InitializeAsync();
        AnalystKey = await Api.NewKeyAsync("analyst");
        FeederKey = await Api.NewKeyAsync("feeder");
        using var analyst = Api.Client(AnalystKey);
        using var feeder = Api.Client(FeederKey);
        var now = DateTime.UtcNow;
        (MainId, MainEventCount) = await SeedAsync(
            feeder, analyst, "simA", seed: 21, now.AddDays(-2), 0.0, 0.0, "Simulated drill sequence A");
        (LiveId, _) = await SeedAsync(
            feeder, analyst, "simB", seed: 22, now.AddDays(-2), -1.0, 4.0, "Simulated drill sequence B");
        await ReleaseLatestAsync(analyst, MainId);
        await ReleaseLatestAsync(analyst, LiveId);
        var draft = await analyst.PostAsJsonAsync($"/v1/sequences/{MainId}/forecasts", new { });
        draft.EnsureSuccessStatusCode();

        if (!File.Exists(Chromium))
            throw new InvalidOperationException($"{Chromium} is missing: run script/ensure-chromium (script/test " +
                $"does).");
        Browser = await Puppeteer.LaunchAsync(new LaunchOptions
        {
            ExecutablePath = Chromium,
            Headless = true,
            Args = ["--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage", "--disable-quic", "--no-first-run",
                "--disable-background-networking", "--disable-component-update", "--disable-sync", "--disable-default-apps"],
        });
    }

    public async Task DisposeAsync()
    {
        if (Browser is not null) await Browser.DisposeAsync();
        await Api.DisposeAsync();
    }

    /// <summary>A seeded synthetic sequence (the generic Reasenberg-Jones parameters, M 6.0, two days) posted as
    /// reviewed events and declared as an exercise; returns its id once the worker's forecast saw every event.</summary>
    async Task<(long Id, int Events)> SeedAsync(HttpClient feeder, HttpClient analyst, string source, int seed,
        DateTime mainshockUtc, double lat, double lon, string name)
    {
        var spec = SimulatedSequenceSpec.FromReasenbergJones(GenericParameterSets.ReasenbergJones1989.Mean, 6.0, 2.5,
            mainshockUtc, 0.01, 1.95) with { Latitude = lat, Longitude = lon, ScatterKm = 6 };
        var catalog = new SequenceSimulator(seed).Simulate(spec);
        await Flow.PostAsync(
            feeder,
            catalog.Select(e => Flow.Event(source, e.Id, e.TimeUtc, e.Latitude, e.Longitude, e.Magnitude)).ToArray());
        // A 40 km zone holds every simulated epicentre (6 km scatter per axis); the scaling relation's 12.6 km for M 6
        // would cut some off.
        var id = await Flow.DeclareAsync(
            analyst, source, catalog[0].Id, new { exercise = true, name, zoneRadiusKm = 40.0 });
        await Flow.LatestAsync(analyst, id, f => Flow.EventCount(f) == catalog.Count);
        return (id, catalog.Count);
    }

    public static async Task<int> ReleaseLatestAsync(HttpClient analyst, long id)
    {
        var latest = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{id}/forecasts/latest");
        var n = latest.GetProperty("number").GetInt32();
        (await analyst.PostAsync($"/v1/sequences/{id}/forecasts/{n}/release", null)).EnsureSuccessStatusCode();
        return n;
    }

    /// <summary>A page that records console errors, uncaught exceptions and failed requests.</summary>
    public async Task<(IPage Page, List<string> Errors)> NewPageAsync(
        int width = 1280, int height = 900, bool mobile = false)
    {
        var page = await Browser.NewPageAsync();
        var errors = new List<string>();
        page.Console += (
            _, e) => { if (e.Message.Type == ConsoleType.Error) lock (errors) errors.Add("console: " +
                "" + e.Message.Text); };
        page.PageError += (_, e) => { lock (errors) errors.Add("page error: " + e.Message); };
        page.RequestFailed += (_, e) =>
        {
            // Chromium ends a 304 to a fetch that bypasses its cache as ERR_ABORTED after handing the 304 to the
            // page; only a request that got no answer at all is a failure.
            if (e.Request.Response is { Status: System.Net.HttpStatusCode.NotModified }) return;
            lock (errors) errors.Add($"request failed: {e.Request.Url} {e.Request.FailureText} (answer: " +
                $"{e.Request.Response?.Status.ToString() ?? "none"})");
        };
        await page.SetViewportAsync(new ViewPortOptions
        {
            Width = width, Height = height, IsMobile = mobile, HasTouch = mobile, DeviceScaleFactor = 1,
        });
        return (page, errors);
    }

    public string Url(string pathAndQuery) => new Uri(Api.BaseAddress, pathAndQuery).ToString();
}

/// <summary>Screenshots and other files a reader of the run may want: in $FORECAST_TEST_ARTIFACTS (script/test
/// sets it and prints it) or else TestResults/artifacts under the working directory.</summary>
public static class Artifacts
{
    public static string Folder
    {
        get
        {
            var dir = Environment.GetEnvironmentVariable("FORECAST_TEST_ARTIFACTS");
            if (string.IsNullOrWhiteSpace(dir)) dir = Path.Combine(
                Directory.GetCurrentDirectory(), "TestResults", "artifacts");
            Directory.CreateDirectory(dir);
            return dir;
        }
    }

    public static async Task ScreenshotAsync(IPage page, string name) =>
        await page.ScreenshotAsync(Path.Combine(Folder, name + ".png"), new ScreenshotOptions { FullPage = true });
}
