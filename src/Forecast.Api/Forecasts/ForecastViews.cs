using Microsoft.Extensions.Options;
using System.Text.Json;
using Microsoft.Extensions.Caching.Memory;
using Forecast.Api.Infrastructure;
using Forecast.Api.Sequences;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;

namespace Forecast.Api.Forecasts;

/// <summary>What a forecast saw: its input snapshot.</summary>
public sealed record InputSnapshot(int EventCount, DateTime? LastEventTime, string CatalogHash);

/// <summary>The advisory: as published, and whether (and from what) an analyst edited it at release.</summary>
public sealed record AdvisoryView(string Text, bool Edited, string? GeneratedText);

/// <summary>A forecast without its full result, for listings.</summary>
public sealed record ForecastSummary(
    long SequenceId, int Number, string State, string Reason, bool Exercise, string? Notice, DateTime IssueTime,
    DateTime CreatedAt, string EngineVersion, string ParameterSet, double MainshockMagnitude, double Mc,
    double FitStartDays, InputSnapshot Input, DateTime? ReleasedAt, DateTime? WithdrawnAt, string? WithdrawReason,
    string Url)
{
    public static ForecastSummary From(ForecastRecord f) => new(f.SequenceId, f.Number, f.State, f.Reason, f.Exercise,
        SequenceView.ExerciseNotice(f.Exercise), f.IssueTime, f.CreatedAt, f.EngineVersion, f.ParameterSet,
        f.MainshockMagnitude, f.Mc, f.FitStartDays, new InputSnapshot(f.EventCount, f.LastEventTime, f.CatalogHash),
        f.ReleasedAt, f.WithdrawnAt, f.WithdrawReason, ForecastViews.Url(f.SequenceId, f.Number));
}

/// <summary>A whole forecast: the summary, the advisory and the engine's result (parameters with uncertainties,
/// prior, table, background probabilities and gains).</summary>
public sealed record ForecastView(
    long SequenceId, int Number, string State, string Reason, bool Exercise, string? Notice, DateTime IssueTime,
    DateTime CreatedAt, string EngineVersion, string ParameterSet, double MainshockMagnitude, double Mc,
    double FitStartDays, InputSnapshot Input, AdvisoryView Advisory, JsonElement Options, JsonElement Result,
    DateTime? ReleasedAt, DateTime? WithdrawnAt, string? WithdrawReason, string Url)
{
    public static ForecastView From(ForecastRecord f) => new(f.SequenceId, f.Number, f.State, f.Reason, f.Exercise,
        SequenceView.ExerciseNotice(f.Exercise), f.IssueTime, f.CreatedAt, f.EngineVersion, f.ParameterSet,
        f.MainshockMagnitude, f.Mc, f.FitStartDays, new InputSnapshot(f.EventCount, f.LastEventTime, f.CatalogHash),
        new AdvisoryView(f.PublishedAdvisory, f.ReleasedAdvisoryText is not null,
            f.ReleasedAdvisoryText is null ? null : f.AdvisoryText),
        Parse(f.Options), Parse(f.Result), f.ReleasedAt, f.WithdrawnAt, f.WithdrawReason,
        ForecastViews.Url(f.SequenceId, f.Number));

    static JsonElement Parse(string json)
    {
        using var doc = JsonDocument.Parse(json);
        return doc.RootElement.Clone();
    }
}

/// <summary>The body of <c>POST /v1/sequences/{id}/forecasts</c>; every field is optional.</summary>
/// <param name="IssueTime">ISO 8601 with offset; now when absent (a past time gives a hindcast).</param>
/// <param name="WindowDays">Window lengths in days from the issue time, e.g. [1, 7, 30, 365].</param>
public sealed record ComputeRequest(
    string? IssueTime, double? Mc, double? FitStartDays, string? ParameterSet, double[]? WindowDays,
    double[]? Thresholds);

/// <summary>The body of a release: an edited advisory text, when the analyst changed the generated one. It must keep
/// every statement and caution of the generated text (<see cref="Core.Advisory.AdvisoryBuilder.MissingFromEdit"/>).</summary>
public sealed record ReleaseRequest(string? AdvisoryText);

public sealed record WithdrawRequest(string? Reason);

public static class ForecastViews
{
    public static string Url(long sequenceId, int number) => $"/v1/sequences/{sequenceId}/forecasts/{number}";

    /// <summary>Strong validator of a forecast's representation: content never changes, but the state does.</summary>
    public static string ETag(ForecastRecord f, string scope) => ETag(ForecastVersion.Of(f), scope);

    public static string ETag(ForecastVersion v, string scope) => $"\"{scope}-{v.SequenceId}-{v.Number}-{v.State}\"";

    /// <summary>Writes ETag and Last-Modified; true when the request's If-None-Match matches (answer 304).</summary>
    public static bool NotModified(HttpContext http, ForecastRecord f, string scope) =>
        NotModified(http, ForecastVersion.Of(f), scope);

    public static bool NotModified(HttpContext http, ForecastVersion v, string scope)
    {
        var etag = ETag(v, scope);
        var headers = http.Response.Headers;
        headers.ETag = etag;
        headers.LastModified = new DateTimeOffset(v.LastModified).ToString("R");
        var ifNoneMatch = http.Request.Headers.IfNoneMatch.ToString();
        if (string.IsNullOrEmpty(ifNoneMatch)) return false;
        return ifNoneMatch.Trim() == "*"
            || ifNoneMatch.Split(',').Select(t => t.Trim()).Select(t => t.StartsWith("W/", StringComparison.Ordinal) ? t[2..] : t)
                .Contains(etag, StringComparer.Ordinal);
    }

    /// <summary>The JSON body of forecast <paramref name="v"/> as the analyst API shows it, rendered once per
    /// representation: a forecast's content never changes, so (sequence, number, state) keys it exactly. Rendering
    /// parses the stored result; polling clients then cost one small query per request instead.</summary>
    public static async Task<JsonBody<ForecastView>> RenderAsync(ForecastVersion v, ForecastStore store,
        RenderedBodies bodies, CancellationToken ct)
    {
        var key = $"a:{v.SequenceId}:{v.Number}:{v.State}";
        if (bodies.Get(key) is { } cached) return new JsonBody<ForecastView>(cached.Body);
        var f = await store.FindAsync(v.SequenceId, v.Number, ct)
            ?? throw new InvalidOperationException($"Forecast {v.SequenceId}/{v.Number} vanished."); // never deleted
        var body = bodies.Serialize(ForecastView.From(f));
        // Released or withdrawn between the two reads: serve what was read, but key it by what it shows.
        bodies.Set(f.State == v.State ? key : $"a:{f.SequenceId}:{f.Number}:{f.State}", new Rendered(body));
        return new JsonBody<ForecastView>(body);
    }
}

/// <summary>A rendered body and, when it has one of its own, its validator.</summary>
public sealed record Rendered(byte[] Body, string? ETag = null);

/// <summary>Rendered bodies by a key that identifies their content exactly (the caller's duty), kept while used
/// (sliding 10 minutes) within a memory budget.</summary>
public sealed class RenderedBodies(Microsoft.Extensions.Options.IOptions<Microsoft.AspNetCore.Http.Json.JsonOptions> json)
    : IDisposable
{
    /// <summary>64 MiB: a forecast body is tens of kilobytes, so thousands of forecasts fit.</summary>
    const long BudgetBytes = 64L * 1024 * 1024;

    readonly MemoryCache _cache = new(
        new MemoryCacheOptions { SizeLimit = BudgetBytes });

    public Rendered? Get(string key) => _cache.TryGetValue(key, out Rendered? r) ? r : null;

    public Rendered Set(string key, Rendered r) => _cache.Set(key, r,
        new MemoryCacheEntryOptions
        {
            Size = r.Body.Length + key.Length * 2L, SlidingExpiration = TimeSpan.FromMinutes(10),
        });

    /// <summary>Serialised exactly as a minimal API's <c>Ok&lt;T&gt;</c> would (the host's JSON options).</summary>
    public byte[] Serialize<T>(T value) => JsonSerializer.SerializeToUtf8Bytes(value, json.Value.SerializerOptions);

    public void Dispose() => _cache.Dispose();
}

/// <summary>The small reads that polling clients repeat, each shared by the callers asking it at the same time
/// (<see cref="Coalescing{TKey, TValue}"/>), reused for <see cref="PollingOptions.ReadReuse"/> after it began, and
/// for <see cref="PollingOptions.RefreshWithin"/> more while one read refreshes it.</summary>
/// <remarks>The endpoints that change a forecast through this process (compute, release, withdraw) call
/// <see cref="Forget"/>, so their caller's next read is exact; a change made by another process (the refit worker
/// of another instance, say) shows within the reuse and refresh times.</remarks>
public sealed class CoalescedReads(ForecastStore forecasts, SequenceStore sequences, IOptions<PollingOptions> polling)
{
    /// <summary>At most this many active sequences are shown publicly (as in the public sequence list).</summary>
    public const int MaxPublicSequences = 500;

    readonly Coalescing<long, ForecastVersion?> _latest = new(polling.Value.ReadReuse, polling.Value.RefreshWithin);
    readonly Coalescing<long, (SequenceRow?, ForecastVersion?)> _released =
        new(polling.Value.ReadReuse, polling.Value.RefreshWithin);
    readonly Coalescing<bool, (IReadOnlyList<SequenceRow>, IReadOnlyDictionary<long, int>)> _feed =
        new(polling.Value.ReadReuse, polling.Value.RefreshWithin);

    /// <summary>Forgets what is known of the sequence's forecasts (and the feed), after this process changed them.</summary>
    public void Forget(long sequenceId)
    {
        _latest.Forget(sequenceId);
        _released.Forget(sequenceId);
        _feed.ForgetAll();
    }

    /// <summary>Which forecast of the sequence is the latest, in any state.</summary>
    public Task<ForecastVersion?> LatestVersionAsync(long sequenceId, CancellationToken ct) => _latest.GetAsync(sequenceId,
        () => forecasts.LatestVersionAsync(sequenceId, releasedOnly: false, CancellationToken.None), ct);

    /// <summary>The sequence and which of its forecasts is released (null when it has none).</summary>
    public Task<(SequenceRow? Sequence, ForecastVersion? Released)> ReleasedAsync(long sequenceId, CancellationToken ct) =>
        _released.GetAsync(sequenceId, async () =>
        {
            var s = await sequences.FindAsync(sequenceId, CancellationToken.None);
            return (s, s is null ? null : await forecasts.LatestVersionAsync(sequenceId, releasedOnly: true, CancellationToken.None));
        }, ct);

    /// <summary>The active sequences and the number of each one's released forecast (those that have one).</summary>
    public Task<(IReadOnlyList<SequenceRow> Active, IReadOnlyDictionary<long, int> Released)> FeedAsync(CancellationToken ct) =>
        _feed.GetAsync(true, async () =>
        {
            var active = await sequences.ListAsync("active", MaxPublicSequences, CancellationToken.None);
            var released = (await forecasts.LatestReleasedVersionsAsync(active.Select(s => s.Id).ToArray(), CancellationToken.None))
                .ToDictionary(v => v.SequenceId, v => v.Number);
            return ((IReadOnlyList<SequenceRow>)active, (IReadOnlyDictionary<long, int>)released);
        }, ct);
}
