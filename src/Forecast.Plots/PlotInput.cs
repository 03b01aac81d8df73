namespace Forecast.Plots;

/// <summary>The role of an event in its sequence.</summary>
public enum EventRole { Foreshock, Mainshock, Aftershock }

/// <summary>One event to plot: UTC time, epicentre in degrees, magnitude.</summary>
public sealed record PlotEvent(DateTime TimeUtc, double Latitude, double Longitude, double Magnitude, EventRole Role);

/// <summary>One cell of the forecast table: window in days after the mainshock, threshold, numbers.</summary>
public sealed record PlotTableRow(
    double T1Days, double T2Days, double MinMagnitude, double Probability, double ExpectedNumber, long Low95,
    long High95);

/// <summary>Reasenberg-Jones parameters <c>10^(a + b (Mm - M)) (t + c)^-p</c>, c in days.</summary>
public sealed record ModelParameters(double A, double B, double P, double CDays);

/// <summary>An Omori-Utsu fit <c>K (t + c)^-p</c> per day for events of magnitude Mc and above.</summary>
public sealed record OmoriParameters(double K, double CDays, double P);

/// <summary>Everything the dashboard plots of one forecast need, as plain values.</summary>
/// <remarks>The host reads these from the stored forecast and the sequence's events; nothing here knows where
/// they came from.</remarks>
public sealed record PlotInput
{
    /// <summary>The sequence's public title, without any exercise marker (the plots add it).</summary>
    public required string SequenceTitle { get; init; }
    public required bool Exercise { get; init; }
    public required int ForecastNumber { get; init; }
    public required string State { get; init; }
    public required DateTime MainshockTimeUtc { get; init; }
    public required double MainshockMagnitude { get; init; }
    public required double CentreLatitude { get; init; }
    public required double CentreLongitude { get; init; }
    public required double ZoneRadiusKm { get; init; }
    public required DateTime IssueTimeUtc { get; init; }
    /// <summary>Completeness magnitude the forecast used (a bin centre).</summary>
    public required double Mc { get; init; }
    public required double BinWidth { get; init; }
    /// <summary>Start S and end T of the fit window, days after the mainshock.</summary>
    public required double FitStartDays { get; init; }
    public required double FitEndDays { get; init; }
    /// <summary>The sequence's b-value estimate (the generic one when too few events), for the
    /// frequency-magnitude plot.</summary>
    public required double B { get; init; }
    /// <summary>Posterior means of the Reasenberg-Jones parameters (the forecast's model).</summary>
    public required ModelParameters Model { get; init; }
    /// <summary>The sequence's own maximum-likelihood Omori-Utsu fit, when there was one.</summary>
    public OmoriParameters? Omori { get; init; }
    /// <summary>Events up to the issue time: foreshocks, the mainshock, aftershocks.</summary>
    public required IReadOnlyList<PlotEvent> Events { get; init; }
    public required IReadOnlyList<PlotTableRow> Table { get; init; }

    internal double IssueDays => (IssueTimeUtc - MainshockTimeUtc).TotalDays;

    internal double DaysAfter(PlotEvent e) => (e.TimeUtc - MainshockTimeUtc).TotalDays;

    /// <summary>Aftershocks at or above Mc (binned: half a bin below the centre counts) inside the fit
    /// window.</summary>
    internal IEnumerable<PlotEvent> FitEvents => Events.Where(e => e.Role == EventRole.Aftershock
        && e.Magnitude >= Mc - BinWidth / 2 - 1e-9 && DaysAfter(e) >= FitStartDays && DaysAfter(e) <= FitEndDays);
}
