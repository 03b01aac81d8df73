using Forecast.Storage.Events;

namespace Forecast.Api.Events;

/// <summary>An event as the API shows it; the field names are those a feed posts.</summary>
public sealed record EventView(
    string Source, string Id, DateTime Time, double Latitude, double Longitude, double DepthKm, double Magnitude,
    string MagnitudeType, string Status, int Version, DateTime CreatedAt, DateTime UpdatedAt)
{
    public static EventView From(EventRow r) => new(r.Source, r.EventId, r.OriginTime, r.Latitude, r.Longitude,
        r.DepthKm, r.Magnitude, r.MagnitudeType, r.Status, r.Version, r.CreatedAt, r.UpdatedAt);
}

public sealed record RevisionView(
    int Version, DateTime RecordedAt, long? KeyId, string[] Changed, DateTime Time, double Latitude,
    double Longitude, double DepthKm, double Magnitude, string MagnitudeType, string Status)
{
    public static RevisionView From(EventRevisionRow r) => new(r.Version, r.RecordedAt, r.KeyId, r.Changed,
        r.OriginTime, r.Latitude, r.Longitude, r.DepthKm, r.Magnitude, r.MagnitudeType, r.Status);
}

public sealed record EventWithHistory(EventView Event, IReadOnlyList<RevisionView> Revisions);

public sealed record EventPage(IReadOnlyList<EventView> Items, string? Next);

/// <summary>What a POST did to one event: <c>created</c>, <c>revised</c> or <c>unchanged</c>.</summary>
public sealed record EventWriteResult(string Source, string Id, string Outcome, int Version);

/// <summary>What a POST of an array did; <c>items</c> is listed for batches of at most 1,000 events.</summary>
public sealed record BatchWriteResult(int Total, int Created, int Revised, int Unchanged,
    IReadOnlyList<EventWriteResult>? Items);

/// <summary>The body of <c>POST /v1/events</c> (or an array of these).</summary>
public sealed record EventSubmission(
    string Id, string Source, string Time, double Latitude, double Longitude, double DepthKm, double Magnitude,
    string MagnitudeType, string? Status);
