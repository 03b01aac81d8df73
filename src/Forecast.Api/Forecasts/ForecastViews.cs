using System.Text.Json;
using Forecast.Api.Sequences;
using Forecast.Storage.Forecasts;

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

/// <summary>The body of a release: an edited advisory text, when the analyst changed the generated one.</summary>
public sealed record ReleaseRequest(string? AdvisoryText);

public sealed record WithdrawRequest(string? Reason);

public static class ForecastViews
{
    public static string Url(long sequenceId, int number) => $"/v1/sequences/{sequenceId}/forecasts/{number}";

    /// <summary>Strong validator of a forecast's representation: content never changes, but the state does.</summary>
    public static string ETag(ForecastRecord f, string scope) => $"\"{scope}-{f.SequenceId}-{f.Number}-{f.State}\"";

    /// <summary>Writes ETag and Last-Modified; true when the request's If-None-Match matches (answer 304).</summary>
    public static bool NotModified(HttpContext http, ForecastRecord f, string scope)
    {
        var etag = ETag(f, scope);
        var headers = http.Response.Headers;
        headers.ETag = etag;
        headers.LastModified = new DateTimeOffset(f.LastModified).ToString("R");
        var ifNoneMatch = http.Request.Headers.IfNoneMatch.ToString();
        if (string.IsNullOrEmpty(ifNoneMatch)) return false;
        return ifNoneMatch.Trim() == "*"
            || ifNoneMatch.Split(',').Select(t => t.Trim()).Select(t => t.StartsWith("W/", StringComparison.Ordinal) ? t[2..] : t)
                .Contains(etag, StringComparer.Ordinal);
    }
}
