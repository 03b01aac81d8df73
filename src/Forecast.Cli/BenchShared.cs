using System.CommandLine;
using System.Net.Http.Headers;

namespace Forecast.Cli;

/// <summary>What the bench-* commands share: the API's address and key, an authorised client, the median.</summary>
static class BenchShared
{
    public static Option<string> UrlOption() =>
        new("--url") { Description = "API base address", DefaultValueFactory = _ => "http://127.0.0.1:5080" };

    public static Option<string> KeyOption(string role = "a feeder key") => new("--key") { Description = role, Required = true };

    public static HttpClient Client(string url, string key, TimeSpan timeout)
    {
        var http = new HttpClient { BaseAddress = new Uri(url), Timeout = timeout };
        http.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        return http;
    }

    /// <summary>Posts events and returns the seconds the whole request took; a refusal stops the benchmark.</summary>
    public static async Task<double> TimePostAsync(HttpClient http, HttpContent content, string mediaType,
        CancellationToken ct)
    {
        content.Headers.ContentType = new MediaTypeHeaderValue(mediaType);
        var clock = System.Diagnostics.Stopwatch.StartNew();
        using var response = await http.PostAsync("/v1/events", content, ct);
        clock.Stop();
        if (!response.IsSuccessStatusCode)
            throw new CliException($"POST failed: {(int)response.StatusCode} {await response.Content.ReadAsStringAsync(ct)}");
        return clock.Elapsed.TotalSeconds;
    }

    public static double Median(IReadOnlyCollection<double> xs)
    {
        var s = xs.Order().ToArray();
        return s.Length % 2 == 1 ? s[s.Length / 2] : (s[s.Length / 2 - 1] + s[s.Length / 2]) / 2;
    }
}
