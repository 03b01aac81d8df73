using Forecast.Core.Forecasting;

namespace Forecast.Plots;

/// <summary>Builds <see cref="PlotInput"/> from an engine result and the sequence around it.</summary>
public static class PlotInputs
{
    /// <param name="events">The sequence's events to the issue time, mainshock included.</param>
    public static PlotInput FromResult(
        ForecastResult result, string sequenceTitle, bool exercise, int forecastNumber, string state,
        double centreLatitude, double centreLongitude, double zoneRadiusKm, IReadOnlyList<PlotEvent> events)
    {
        ArgumentNullException.ThrowIfNull(result);
        ArgumentNullException.ThrowIfNull(events);
        var o = result.Omori;
        return new PlotInput
        {
            SequenceTitle = sequenceTitle, Exercise = exercise, ForecastNumber = forecastNumber, State = state,
            MainshockTimeUtc = result.MainshockTimeUtc, MainshockMagnitude = result.MainshockMagnitude,
            CentreLatitude = centreLatitude, CentreLongitude = centreLongitude, ZoneRadiusKm = zoneRadiusKm,
            IssueTimeUtc = result.IssueTimeUtc, Mc = result.Completeness.Mc, BinWidth = result.Completeness.BinWidth,
            FitStartDays = result.FitStartDays, FitEndDays = result.FitEndDays, B = result.BValue.B,
            Model = new ModelParameters(result.Posterior.A, result.Posterior.B, result.Posterior.P,
                Math.Pow(10, result.Posterior.Log10C)),
            Omori = o is { K: { } k, C: { } c, P: { } p } ? new OmoriParameters(k, c, p) : null,
            Events = events,
            Table = result.Table.Select(r => new PlotTableRow(r.T1Days, r.T2Days, r.MinMagnitude, r.Probability,
                r.ExpectedNumber, r.Low95, r.High95)).ToList(),
        };
    }
}
