using Forecast.Core.Advisory;
using Forecast.Storage.Sequences;

namespace Forecast.Api.Sequences;

/// <summary>An event reference: the feed's source code and the event's id within it.</summary>
public sealed record EventRef(string? Source, string? Id);

/// <summary>The body of <c>POST /v1/sequences</c>; everything but the mainshock is optional.</summary>
public sealed record DeclareSequence(
    EventRef? Mainshock, string? Name, double? ZoneMultiple, double? ZoneFloorKm, double? ZoneRadiusKm,
    double? ForeshockDays, string? ParameterSet, double? Mc, double? FitStartDays, bool? Exercise,
    double? BackgroundRatePerDay, double? BackgroundMagnitude) : ISequenceFields;

/// <summary>The analyst's choices shared by declaring and editing a sequence.</summary>
public interface ISequenceFields
{
    string? Name { get; }
    double? ZoneMultiple { get; }
    double? ZoneFloorKm { get; }
    double? ZoneRadiusKm { get; }
    double? ForeshockDays { get; }
    string? ParameterSet { get; }
    double? Mc { get; }
    double? FitStartDays { get; }
    bool? Exercise { get; }
    double? BackgroundRatePerDay { get; }
    double? BackgroundMagnitude { get; }

    Forecast.Storage.Sequences.SequenceChoices ToChoices() => new()
    {
        Name = Name, ZoneMultiple = ZoneMultiple, ZoneFloorKm = ZoneFloorKm, ZoneRadiusKm = ZoneRadiusKm,
        ForeshockDays = ForeshockDays, ParameterSet = ParameterSet, Mc = Mc, FitStartDays = FitStartDays,
        Exercise = Exercise, BackgroundRatePerDay = BackgroundRatePerDay, BackgroundMagnitude = BackgroundMagnitude,
    };
}

/// <summary>The body of <c>PATCH /v1/sequences/{id}</c>: fields given are changed, the others kept.
/// <c>clearZoneRadius</c> goes back to the scaling relation.</summary>
public sealed record EditSequence(
    string? Name, double? ZoneMultiple, double? ZoneFloorKm, double? ZoneRadiusKm, bool? ClearZoneRadius,
    double? ForeshockDays, string? ParameterSet, double? Mc, double? FitStartDays, bool? Exercise,
    double? BackgroundRatePerDay, double? BackgroundMagnitude) : ISequenceFields;

public sealed record ZoneView(
    double CentreLatitude, double CentreLongitude, double RadiusKm, double Multiple, double FloorKm,
    double? RadiusOverrideKm, string Rule);

public sealed record MainshockView(string Source, string Id, double Magnitude, DateTime Time, string Url);

public sealed record MainshockChangeView(DateTime ChangedAt, EventRef From, double FromMagnitude, EventRef To,
    double ToMagnitude);

public sealed record SequenceView(
    long Id, string? Name, string Status, bool Automatic, bool Exercise, string? Notice, MainshockView Mainshock,
    ZoneView Zone, double ForeshockDays, string ParameterSet, double? Mc, double? FitStartDays,
    double? BackgroundRatePerDay, double? BackgroundMagnitude, string? LastError, DateTime? LastErrorAt,
    IReadOnlyList<MainshockChangeView> MainshockChanges, DateTime CreatedAt, DateTime UpdatedAt, DateTime? ClosedAt,
    string Url, string ForecastsUrl)
{
    public static SequenceView From(SequenceRow s, IReadOnlyList<MainshockChangeRow> changes) => new(
        s.Id, s.Name, s.Status, s.Automatic, s.Exercise, ExerciseNotice(s.Exercise),
        new MainshockView(s.MainshockSource, s.MainshockEventId, s.MainshockMagnitude, s.MainshockTime,
            Events.EventEndpoints.EventUrl(s.MainshockSource, s.MainshockEventId)),
        new ZoneView(s.CentreLatitude, s.CentreLongitude, s.ZoneRadiusKm, s.ZoneMultiple, s.ZoneFloorKm, s.ZoneOverrideKm,
            s.ZoneOverrideKm is null
                ? "max(floorKm, multiple * 10^(-2.44 + 0.59 M)) km: Wells & Coppersmith (1994) subsurface rupture length"
                : "fixed radius set on the sequence"),
        s.ForeshockDays, s.ParameterSet, s.Mc, s.FitStartDays, s.BackgroundRatePerDay, s.BackgroundMagnitude,
        s.LastError, s.LastErrorAt,
        changes.Select(c => new MainshockChangeView(c.ChangedAt, new EventRef(c.FromSource, c.FromEventId), c.FromMagnitude,
            new EventRef(c.ToSource, c.ToEventId), c.ToMagnitude)).ToList(),
        s.CreatedAt, s.UpdatedAt, s.ClosedAt, PathOf(s.Id), PathOf(s.Id) + "/forecasts");

    public static string PathOf(long id) => $"/v1/sequences/{id}";

    /// <summary>The drill marker carried by every output of an exercise sequence.</summary>
    public static string? ExerciseNotice(bool exercise) =>
        exercise ? AdvisoryBuilder.ExerciseMarker + ": THIS IS A DRILL, NOT A REAL FORECAST." : null;
}

public sealed record MemberView(
    string Source, string Id, DateTime Time, double Latitude, double Longitude, double DepthKm, double Magnitude,
    string MagnitudeType, double DistanceKm)
{
    public static MemberView From(MemberEvent e) => new(e.Source, e.EventId, e.OriginTime, e.Latitude, e.Longitude,
        e.DepthKm, e.Magnitude, e.MagnitudeType, e.DistanceKm);
}

public sealed record MembershipView(
    long SequenceId, string? Notice, MemberView Mainshock, IReadOnlyList<MemberView> Foreshocks,
    IReadOnlyList<MemberView> Aftershocks);
