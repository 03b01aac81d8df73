using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using Forecast.Api.Infrastructure;
using Microsoft.AspNetCore.Http.Timeouts;
using Microsoft.AspNetCore.Server.Kestrel.Core;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Tests.Stress;

/// <summary>The API with a one-second request time limit and no refit worker.</summary>
public sealed class ShortTimeoutServer : ApiServer
{
    public static readonly TimeSpan Timeout = TimeSpan.FromSeconds(1);

    protected override IReadOnlyDictionary<string, string> Settings => new Dictionary<string, string>
    {
        ["RefitWorker:Enabled"] = "false",
        ["RequestLimits:Timeout"] = "00:00:01",
    };
}

/// <summary>Item 6 of issue 7: parameterised SQL, request size and time limits.</summary>
public class SecurityBasicsTests(ShortTimeoutServer api) : IClassFixture<ShortTimeoutServer>
{
    // From this source file, not the build output: the artifacts may live outside the repository.
    static string RepositoryRoot([System.Runtime.CompilerServices.CallerFilePath] string here = "")
    {
        for (var dir = new DirectoryInfo(Path.GetDirectoryName(here)!); dir is not null; dir = dir.Parent)
            if (File.Exists(Path.Combine(dir.FullName, "Forecast.sln"))) return dir.FullName;
        throw new InvalidOperationException($"No Forecast.sln above {here}.");
    }

    /// <summary>Holes reviewed by hand that are not constants: each is chosen among SQL literals in code, never
    /// from input. File name and hole expression.</summary>
    static readonly HashSet<(string File, string Hole)> ReviewedHoles =
    [
        // InZone's longitude clause: one of two literals picked by the zone's geometry.
        ("SequenceStore.cs", "lonClause"),
        // InZone's extra condition: a private method; every caller passes a literal.
        ("SequenceStore.cs", "where"),
        // LatestAsync<T>'s column list: a private method; its two callers pass the constants Columns and VersionColumns.
        ("ForecastStore.cs", "columns"),
        // DbUp's log messages, formatted for the migration log; no SQL.
        ("Migrator.cs", "string.Format"),
    ];

    static readonly Regex Interpolated = new(
        "(?<dollars>\\$+)@?(?:\"\"\"(?<raw>.*?)\"\"\"|\"(?<plain>(?:[^\"\\\\\\n]|\\\\.)*)\")",
        RegexOptions.Singleline | RegexOptions.CultureInvariant);

    static readonly Regex SqlWords = new(
        @"\b(select|insert\s+into|update\s+\w+\s+set|delete\s+from|returning|where|order\s+by|values)\b",
        RegexOptions.CultureInvariant);

    [Fact]
    public void SqlInStorageIsParameterisedInterpolatingOnlyConstants()
    {
        var storage = Path.Combine(RepositoryRoot(), "src", "Forecast.Storage");
        var files = Directory.EnumerateFiles(storage, "*.cs", SearchOption.AllDirectories)
            .Where(f => !f.Contains($"{Path.DirectorySeparatorChar}obj{Path.DirectorySeparatorChar}", StringComparison.Ordinal)
                        && !f.Contains($"{Path.DirectorySeparatorChar}bin{Path.DirectorySeparatorChar}", StringComparison.Ordinal))
            .ToList();
        Assert.NotEmpty(files);
        var sqlStrings = 0;
        var bad = new List<string>();
        foreach (var file in files)
        {
            var code = File.ReadAllText(file);
            var name = Path.GetFileName(file);
            var constants = Regex.Matches(code, @"const\s+string\s+(\w+)\s*=").Select(m => m.Groups[1].Value).ToHashSet();
            foreach (Match m in Interpolated.Matches(code))
            {
                var text = m.Groups["raw"].Success ? m.Groups["raw"].Value : m.Groups["plain"].Value;
                if (SqlWords.Matches(text).Count < 2) continue;   // a message, not a statement
                sqlStrings++;
                Assert.True(m.Groups["dollars"].Value.Length == 1, $"{name}: $$ raw strings: extend this scan");
                foreach (Match hole in Regex.Matches(text, @"(?<!\{)\{([^{}]+)\}(?!\})"))
                {
                    var expr = hole.Groups[1].Value.Split(':', ',')[0].Trim();
                    if (!constants.Contains(expr) && !ReviewedHoles.Contains((name, expr)))
                        bad.Add($"{name}: {{{expr}}} in \"{text.Trim()[..Math.Min(80, text.Trim().Length)]}...\"");
                }
            }
            // string.Format and string.Concat are the other ways text gets into SQL.
            foreach (Match f in Regex.Matches(code, @"string\.Format\s*\(|String\.Format\s*\(|string\.Concat\s*\("))
                if (!ReviewedHoles.Contains((name, f.Value.TrimEnd('(', ' '))))
                    bad.Add($"{name}: {f.Value} (review it, then allow it here)");
        }
        Assert.True(sqlStrings >= 3, $"the scan found only {sqlStrings} interpolated SQL strings; is it still matching?");
        Assert.True(bad.Count == 0, "SQL built from non-constant text:\n" + string.Join("\n", bad));
    }

    [Fact]
    public void TheBodySizeLimitAndTheTimeLimitAreConfigured()
    {
        var kestrel = api.Services.GetRequiredService<IOptions<KestrelServerOptions>>().Value;
        var ingest = api.Services.GetRequiredService<IOptions<IngestOptions>>().Value;
        // Kestrel's limit bounds every body; the ingest limits may be tighter per format, never looser.
        Assert.NotNull(kestrel.Limits.MaxRequestBodySize);
        Assert.True(kestrel.Limits.MaxRequestBodySize >= ingest.MaxBodyBytes);
        Assert.True(kestrel.Limits.MaxRequestBodySize <= 1L << 31, $"{kestrel.Limits.MaxRequestBodySize} bytes");
        var timeouts = api.Services.GetRequiredService<IOptions<RequestTimeoutOptions>>().Value;
        Assert.Equal(ShortTimeoutServer.Timeout, timeouts.DefaultPolicy?.Timeout);
        Assert.Equal(TimeSpan.FromMinutes(2), new RequestLimitsOptions().Timeout);
    }

    [Fact]
    public async Task ARequestSlowerThanTheTimeLimitIs504ProblemStoresNothingAndTheServiceStaysReady()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var before = await StressChecks.FingerprintAsync(api.ConnectionString);
        var body = """
            {"id": "slow-1", "source": "slow", "time": "2026-01-01T00:00:00Z", "latitude": 1, "longitude": 1,
             "depthKm": 5, "magnitude": 2, "magnitudeType": "ML", "status": "automatic"}
            """;
        // The whole valid body does arrive, after 4 s: without the 1 s limit this would be a 201. The client reads
        // the answer only once it has sent everything, so the time it sees is not the server's.
        using var content = new SlowContent(Encoding.UTF8.GetBytes(body), TimeSpan.FromSeconds(4));
        content.Headers.ContentType = new System.Net.Http.Headers.MediaTypeHeaderValue("application/json");
        var response = await feeder.PostAsync("/v1/events", content);
        var problem = await StressChecks.ProblemAsync(response, 504, "slow upload");
        Assert.Equal("urn:forecast:problem:timeout", problem.GetProperty("type").GetString());
        Assert.Equal(before, await StressChecks.FingerprintAsync(api.ConnectionString));
        await StressChecks.AssertReadyAsync(api, "after a timed-out request");
    }

    [Fact]
    public async Task CorsIsOnlyOnPublicReads()
    {
        // Every endpoint that carries a CORS policy is a GET (or HEAD) under /v1/public; every other one has none.
        var endpoints = api.Services.GetRequiredService<Microsoft.AspNetCore.Routing.EndpointDataSource>().Endpoints
            .OfType<Microsoft.AspNetCore.Routing.RouteEndpoint>().ToList();
        var withCors = endpoints.Where(e => e.Metadata.GetMetadata<Microsoft.AspNetCore.Cors.Infrastructure.ICorsMetadata>() is not null)
            .ToList();
        Assert.NotEmpty(withCors);
        foreach (var e in withCors)
        {
            var methods = e.Metadata.GetMetadata<Microsoft.AspNetCore.Routing.IHttpMethodMetadata>()?.HttpMethods ?? [];
            Assert.True(e.RoutePattern.RawText!.StartsWith("/v1/public/", StringComparison.Ordinal), e.RoutePattern.RawText);
            Assert.True(methods.Count > 0 && methods.All(m => m is "GET" or "HEAD"), $"{e.RoutePattern.RawText}: {string.Join(",", methods)}");
        }

        // And on the wire (Fetch standard, CORS protocol): a foreign origin is allowed to read a public list, and
        // neither a read nor a preflighted write elsewhere answers with Access-Control-Allow-Origin.
        using var client = api.Client(ApiServer.AdminKey);
        static HttpRequestMessage From(HttpMethod method, string path)
        {
            var r = new HttpRequestMessage(method, path);
            r.Headers.Add("Origin", "https://elsewhere.example");
            return r;
        }
        var open = await client.SendAsync(From(HttpMethod.Get, "/v1/public/sequences"));
        Assert.Equal(HttpStatusCode.OK, open.StatusCode);
        Assert.Equal("*", open.Headers.GetValues("Access-Control-Allow-Origin").Single());
        var closed = await client.SendAsync(From(HttpMethod.Get, "/v1/keys"));
        Assert.Equal(HttpStatusCode.OK, closed.StatusCode);
        Assert.False(closed.Headers.Contains("Access-Control-Allow-Origin"));
        using var preflight = From(HttpMethod.Options, "/v1/events");
        preflight.Headers.Add("Access-Control-Request-Method", "POST");
        preflight.Headers.Add("Access-Control-Request-Headers", "authorization, content-type");
        Assert.False((await client.SendAsync(preflight)).Headers.Contains("Access-Control-Allow-Origin"));
    }

    /// <summary>Sends half the body, waits, then the rest: a feed on a stalled link.</summary>
    sealed class SlowContent(byte[] bytes, TimeSpan pause) : HttpContent
    {
        protected override async Task SerializeToStreamAsync(Stream stream, TransportContext? context)
        {
            await stream.WriteAsync(bytes.AsMemory(0, bytes.Length / 2));
            await stream.FlushAsync();
            await Task.Delay(pause);
            await stream.WriteAsync(bytes.AsMemory(bytes.Length / 2));
        }

        protected override bool TryComputeLength(out long length)
        {
            length = bytes.Length;
            return true;
        }
    }
}
