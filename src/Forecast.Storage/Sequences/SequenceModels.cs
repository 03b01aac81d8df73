using Forecast.Core.Zone;

namespace Forecast.Storage.Sequences;

/// <summary>How sequences are opened and bounded; the host fills it from configuration (section <c>Sequences</c>).</summary>
public sealed record SequenceSettings
{
    /// <summary>An accepted event at or above this magnitude outside every active zone opens a sequence.</summary>
    public double TriggerMagnitude { get; init; } = 5.0;

    /// <summary>Zone radius in Wells &amp; Coppersmith rupture lengths (see <see cref="AftershockZone"/>).</summary>
    public double ZoneMultiple { get; init; } = AftershockZone.DefaultMultiple;

    /// <summary>Smallest zone radius, km (see <see cref="AftershockZone"/>).</summary>
    public double ZoneFloorKm { get; init; } = AftershockZone.DefaultFloorKm;

    /// <summary>Events in the zone up to this many days before the mainshock are listed as foreshocks.</summary>
    /// <remarks>Project choice: most foreshocks that are recognised as such come within days of the mainshock;
    /// a week keeps them without pulling in unrelated background events.</remarks>
    public double ForeshockDays { get; init; } = 7;

    /// <summary>The generic parameter set used as prior unless the sequence names another.</summary>
    public string ParameterSet { get; init; } = "rj1989-generic";
}

/// <summary>A sequence as stored, with its current mainshock.</summary>
public sealed class SequenceRow
{
    public long Id { get; init; }
    public long MainshockPk { get; init; }
    public string MainshockSource { get; init; } = "";
    public string MainshockEventId { get; init; } = "";
    public double MainshockMagnitude { get; init; }
    public string MainshockStatus { get; init; } = "";
    public string? Name { get; init; }
    public string Status { get; init; } = "";
    public bool Automatic { get; init; }
    public bool Exercise { get; init; }
    public double ZoneMultiple { get; init; }
    public double ZoneFloorKm { get; init; }
    public double? ZoneOverrideKm { get; init; }
    public double ZoneRadiusKm { get; init; }
    public double CentreLatitude { get; init; }
    public double CentreLongitude { get; init; }
    public DateTime MainshockTime { get; init; }
    public double ForeshockDays { get; init; }
    public string ParameterSet { get; init; } = "";
    public double? Mc { get; init; }
    public double? FitStartDays { get; init; }
    public double? BackgroundRatePerDay { get; init; }
    public double? BackgroundMagnitude { get; init; }
    public string? LastError { get; init; }
    public DateTime? LastErrorAt { get; init; }
    public long? CreatedBy { get; init; }
    public DateTime CreatedAt { get; init; }
    public DateTime UpdatedAt { get; init; }
    public DateTime? ClosedAt { get; init; }
}

/// <summary>One change of mainshock: a larger event in the zone took over.</summary>
public sealed record MainshockChangeRow(
    DateTime ChangedAt, string FromSource, string FromEventId, double FromMagnitude,
    string ToSource, string ToEventId, double ToMagnitude);

/// <summary>The choices an analyst may make when declaring or editing a sequence; null keeps the default.</summary>
public sealed record SequenceChoices
{
    public string? Name { get; init; }
    public double? ZoneMultiple { get; init; }
    public double? ZoneFloorKm { get; init; }
    /// <summary>A fixed radius in km instead of the scaling relation.</summary>
    public double? ZoneRadiusKm { get; init; }
    public double? ForeshockDays { get; init; }
    public string? ParameterSet { get; init; }
    public double? Mc { get; init; }
    public double? FitStartDays { get; init; }
    public bool? Exercise { get; init; }
    public double? BackgroundRatePerDay { get; init; }
    public double? BackgroundMagnitude { get; init; }
}

public enum DeclareOutcome { Created, Duplicate, NoSuchEvent, EventRetracted }

/// <summary>What a declaration did: the sequence (new, or the one that already exists) or why not.</summary>
public sealed record DeclareResult(DeclareOutcome Outcome, long? SequenceId);

/// <summary>An event of a sequence with its role.</summary>
public sealed record MemberEvent(
    long Pk, string Source, string EventId, DateTime OriginTime, double Latitude, double Longitude, double DepthKm,
    double Magnitude, string MagnitudeType, string Status, int Version, double DistanceKm);

/// <summary>The events of a sequence: the mainshock, foreshocks (before it, within the foreshock window) and
/// aftershocks (after it), all inside the zone and not retracted.</summary>
public sealed record Membership(MemberEvent Mainshock, IReadOnlyList<MemberEvent> Foreshocks, IReadOnlyList<MemberEvent> Aftershocks);
