namespace Forecast.Storage.Events;

/// <summary>An event as a feed submits it, already validated.</summary>
public sealed record EventInput(
    string Source, string EventId, DateTime OriginTime, double Latitude, double Longitude,
    double DepthKm, double Magnitude, string MagnitudeType, string Status);

/// <summary>The current state of a stored event.</summary>
public sealed record EventRow(
    long Id, string Source, string EventId, DateTime OriginTime, double Latitude, double Longitude,
    double DepthKm, double Magnitude, string MagnitudeType, string Status, int Version,
    DateTime CreatedAt, DateTime UpdatedAt);

/// <summary>One version of an event in its append-only history.</summary>
/// <remarks>A property record rather than a positional one: Dapper hands text[] to constructors as
/// <see cref="Array"/>, but sets a <c>string[]</c> property correctly.</remarks>
public sealed record EventRevisionRow
{
    public int Version { get; init; }
    public DateTime RecordedAt { get; init; }
    public long? KeyId { get; init; }
    public string[] Changed { get; init; } = [];
    public DateTime OriginTime { get; init; }
    public double Latitude { get; init; }
    public double Longitude { get; init; }
    public double DepthKm { get; init; }
    public double Magnitude { get; init; }
    public string MagnitudeType { get; init; } = "";
    public string Status { get; init; } = "";
}

/// <summary>What one upsert did to each event it was given.</summary>
public enum EventOutcome { Created, Revised, Unchanged }

public sealed record EventUpsertItem(string Source, string EventId, EventOutcome Outcome, int Version);

/// <summary>Counts of one batch, with the per-event outcomes in submission order.</summary>
public sealed record UpsertSummary(int Created, int Revised, int Unchanged, IReadOnlyList<EventUpsertItem> Items)
{
    public int Total => Created + Revised + Unchanged;
}

/// <summary>Filters for the catalog query; null means no constraint.</summary>
public sealed record EventQuery
{
    public DateTime? FromUtc { get; init; }
    public DateTime? ToUtc { get; init; }
    public double? MinMagnitude { get; init; }
    public double? MaxMagnitude { get; init; }
    public double? MinLatitude { get; init; }
    public double? MaxLatitude { get; init; }
    public double? MinLongitude { get; init; }
    public double? MaxLongitude { get; init; }
    /// <summary>Centre and radius of a circle (great-circle distance on a 6371 km sphere).</summary>
    public (double Latitude, double Longitude, double RadiusKm)? Circle { get; init; }
    public bool IncludeDeleted { get; init; }
    /// <summary>Resume after this (origin time, row id), exclusive: the keyset cursor.</summary>
    public (DateTime OriginTime, long Id)? After { get; init; }
    public int Limit { get; init; } = 100;
}
