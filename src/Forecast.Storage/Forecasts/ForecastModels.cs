namespace Forecast.Storage.Forecasts;

/// <summary>Forecast settings; the host fills them from configuration (section <c>Forecasts</c>).</summary>
public sealed record ForecastSettings
{
    /// <summary>The official agency an advisory tells people to follow.</summary>
    public string AgencyName { get; init; } = "the national geological survey";

    /// <summary>Bootstrap resamples for the uncertainty of Mc (0 skips them).</summary>
    public int BootstrapSamples { get; init; } = 50;

    /// <summary>Seed of the engine's bootstrap: the same input gives the same forecast.</summary>
    public int Seed { get; init; } = 1;

    /// <summary>Years of catalog before a sequence from which its background rate is estimated, when no analyst
    /// has set one.</summary>
    public double BackgroundYears { get; init; } = 10;

    /// <summary>Magnitude the catalog background rate counts from (the catalog should be complete above it).</summary>
    public double BackgroundMinMagnitude { get; init; } = 3.0;

    /// <summary>Fewer independent events than this in the zone's history: no background rate (too uncertain).</summary>
    public int BackgroundMinEvents { get; init; } = 10;
}

/// <summary>Choices for one computation; null takes the sequence's choice, then the engine's default.</summary>
public sealed record ComputeOptions
{
    /// <summary>Issue time; now when null. Only events up to it are used (a hindcast when in the past).</summary>
    public DateTime? IssueTimeUtc { get; init; }
    public double? Mc { get; init; }
    public double? FitStartDays { get; init; }
    public string? ParameterSet { get; init; }
    /// <summary>Forecast windows as durations in days from the issue time, e.g. [1, 7, 30, 365].</summary>
    public IReadOnlyList<double>? WindowDays { get; init; }
    public IReadOnlyList<double>? Thresholds { get; init; }
}

/// <summary>A stored forecast. The content never changes; <see cref="State"/> and the release and withdrawal
/// fields do.</summary>
public sealed class ForecastRecord
{
    public long Id { get; init; }
    public long SequenceId { get; init; }
    public int Number { get; init; }
    public string State { get; init; } = "";
    public string Reason { get; init; } = "";
    public bool Exercise { get; init; }
    public DateTime IssueTime { get; init; }
    public DateTime CreatedAt { get; init; }
    public string EngineVersion { get; init; } = "";
    public string ParameterSet { get; init; } = "";
    public long MainshockPk { get; init; }
    public double MainshockMagnitude { get; init; }
    public double Mc { get; init; }
    public double FitStartDays { get; init; }
    public int EventCount { get; init; }
    public DateTime? LastEventTime { get; init; }
    public string CatalogHash { get; init; } = "";
    /// <summary>The engine's result as JSON.</summary>
    public string Result { get; init; } = "";
    /// <summary>The options asked for, as JSON.</summary>
    public string Options { get; init; } = "";
    public string AdvisoryText { get; init; } = "";
    public long? CreatedBy { get; init; }
    public DateTime? ReleasedAt { get; init; }
    public long? ReleasedBy { get; init; }
    public string? ReleasedAdvisoryText { get; init; }
    public DateTime? WithdrawnAt { get; init; }
    public long? WithdrawnBy { get; init; }
    public string? WithdrawReason { get; init; }

    /// <summary>When the record last changed (creation, release, withdrawal; supersession is not recorded).</summary>
    public DateTime LastModified => new[] { CreatedAt, ReleasedAt ?? DateTime.MinValue, WithdrawnAt ?? DateTime.MinValue }.Max();

    /// <summary>The advisory as published: the analyst's edit when there is one.</summary>
    public string PublishedAdvisory => ReleasedAdvisoryText ?? AdvisoryText;
}

public enum TransitionOutcome { Done, NotFound, WrongState, NewerReleased }
