using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;
using Npgsql;

namespace Forecast.Api.Tests.Formats;

/// <summary>The API with a 64 KiB limit on QuakeML and FDSN text bodies.</summary>
public sealed class SmallCatalogLimitServer : ApiServer
{
    protected override IReadOnlyDictionary<string, string> Settings => new Dictionary<string, string>
    {
        ["Ingest:MaxCatalogBodyBytes"] = "65536",
    };
}

/// <summary>A catalog body streamed without a Content-Length (chunked, RFC 9112 7.1) is cut off at the limit while
/// it is being read, and refused whole.</summary>
public class CatalogUploadLimitTests(SmallCatalogLimitServer api) : IClassFixture<SmallCatalogLimitServer>
{
    /// <summary>Content of unknown length: HttpClient sends it chunked, so only the server's reading can stop it.</summary>
    sealed class ChunkedContent(byte[] bytes, string mediaType) : HttpContent
    {
        public ChunkedContent(string text, string mediaType) : this(Encoding.UTF8.GetBytes(text), mediaType) { }

        public string MediaType { get; } = mediaType;

        protected override async Task SerializeToStreamAsync(Stream stream, System.Net.TransportContext? context)
        {
            for (var at = 0; at < bytes.Length; at += 8192)
                await stream.WriteAsync(bytes.AsMemory(at, Math.Min(8192, bytes.Length - at)));
        }

        protected override bool TryComputeLength(out long length)
        {
            length = 0;
            return false;
        }
    }

    static string FdsnDocument(string prefix, int events)
    {
        var text = new StringBuilder("#EventID|Time|Latitude|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|Magnitude|MagAuthor|EventLocationName\n");
        for (var i = 0; i < events; i++)
            text.Append(System.FormattableString.Invariant($"{prefix}-{i}|2024-05-03T01:{i / 60 % 60:D2}:{i % 60:D2}|10.5|-20.25|8|a|c|zz|{prefix}-{i}|ML|3.1|a|Invented\n"));
        return text.ToString();
    }

    async Task<long> CountAsync(string prefix)
    {
        await using var conn = new NpgsqlConnection(api.ConnectionString);
        await conn.OpenAsync();
        await using var cmd = new NpgsqlCommand("select count(*) from event where event_id like @like", conn);
        cmd.Parameters.AddWithValue("like", prefix + "-%");
        return (long)(await cmd.ExecuteScalarAsync())!;
    }

    [Fact]
    public async Task AChunkedBodyOverTheLimitIsRefusedWith413AndStoresNothing()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var document = FdsnDocument("over", 2_000);   // about 190 KB
        using var content = new ChunkedContent(document, "text/plain");
        content.Headers.ContentType = new System.Net.Http.Headers.MediaTypeHeaderValue("text/plain");
        var response = await feeder.PostAsync("/v1/events", content);
        Assert.Equal(HttpStatusCode.RequestEntityTooLarge, response.StatusCode);
        var problem = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.Equal("urn:forecast:problem:body-too-large", problem.GetProperty("type").GetString());
        Assert.Equal(0, await CountAsync("over"));
    }

    [Fact]
    public async Task AChunkedBodyWithinTheLimitIsStoredWhole()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        using var content = new ChunkedContent(FdsnDocument("within", 300), "text/plain");   // about 28 KB
        content.Headers.ContentType = new System.Net.Http.Headers.MediaTypeHeaderValue("text/plain");
        var response = await feeder.PostAsync("/v1/events", content);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal(300, (await response.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("created").GetInt32());
        Assert.Equal(300, await CountAsync("within"));
    }

    [Fact]
    public void UploadSlotsAdmitAtMostTheConfiguredNumberAtOnce()
    {
        // The endpoint answers 503 with Retry-After when TryEnter fails; the slots themselves are checked here.
        using var slots = new Forecast.Api.Formats.CatalogUploadSlots(Microsoft.Extensions.Options.Options.Create(
            new Forecast.Api.Infrastructure.IngestOptions { MaxConcurrentCatalogUploads = 2 }));
        Assert.True(slots.TryEnter());
        Assert.True(slots.TryEnter());
        Assert.False(slots.TryEnter());
        slots.Release();
        Assert.True(slots.TryEnter());
    }
}
