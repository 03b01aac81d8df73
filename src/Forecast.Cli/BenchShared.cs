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

    public static double Median(IReadOnlyCollection<double> xs)
    {
        var s = xs.Order().ToArray();
        return s.Length % 2 == 1 ? s[s.Length / 2] : (s[s.Length / 2 - 1] + s[s.Length / 2]) / 2;
    }
}
