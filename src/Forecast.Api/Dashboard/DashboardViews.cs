using System.Globalization;
using System.Text.Json;
using Forecast.Api.Sequences;
using Forecast.Core.Advisory;
using Forecast.Core.Forecasting;
using Forecast.Plots;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;

namespace Forecast.Api.Dashboard;

/// <summary>One cell of the forecast table, with the words and the formatted numbers the pages show beside each
/// other (IPCC AR5 calibrated words, Mastrandrea et al. 2010, always with the number).</summary>
public sealed record DashboardRow(
    double T1Days, double T2Days, DateTime StartUtc, DateTime EndUtc, string Window, double MinMagnitude,
    double Probability, string Percent, string Word, double ExpectedNumber, long Median, long Low95, long High95,
    double? BackgroundProbability, string? BackgroundPercent, double? Gain);

/// <summary>A plot of the forecast: where it is and its text alternative.</summary>
public sealed record DashboardPlot(string Kind, string Title, string Description, string Url);

/// <summary>When the forecast stops being current: its issue time plus the refit cadence (hourly to day 3,
/// 6-hourly to day 30, then daily; <see cref="RefitSchedule"/>).</summary>
public sealed record Freshness(DateTime IssueTime, DateTime StaleAt, double CadenceHours, string Rule);

/// <summary>The fit behind a forecast, for the analyst view: the engine's own reports as stored.</summary>
public sealed record DashboardDiagnostics(
    string Reason, string EngineVersion, string ParameterSet, double FitStartDays, string FitStartSource,
    double FitEndDays, int AftershockCount, JsonElement Completeness, JsonElement BValue, JsonElement Omori,
    JsonElement Posterior, JsonElement Prior, JsonElement Notes, string CatalogHash);

/// <summary>Everything a dashboard page shows of one forecast.</summary>
public sealed record DashboardView(
    long SequenceId, int Number, string State, bool Exercise, string? Notice, string Title, string Agency,
    IReadOnlyList<string> Cautions, DateTime IssueTime, DateTime CreatedAt, DateTime? ReleasedAt,
    DateTime? WithdrawnAt, double MainshockMagnitude, DateTime MainshockTime, double CentreLatitude,
    double CentreLongitude, double ZoneRadiusKm, int EventCount, string Advisory, Freshness Freshness,
    IReadOnlyList<DashboardRow> Table, IReadOnlyList<DashboardPlot> Plots, DashboardDiagnostics? Diagnostics);

/// <summary>Reads a stored forecast and its sequence into the dashboard's views and plot input.</summary>
public static class DashboardData
{
    public const string FreshnessRule =
        "A forecast is stale once older than the refit cadence at that time: hourly for the first 3 days after the " +
        "mainshock, every 6 hours until day 30, then daily.";

    public static ForecastResult Result(ForecastRecord f) =>
        JsonSerializer.Deserialize<ForecastResult>(f.Result, ForecastService.Json)
        ?? throw new InvalidOperationException($"Forecast {f.SequenceId}/{f.Number} has no result.");

    /// <summary>The sequence's title as the public sees it, with or without the exercise marker.</summary>
    public static string Title(SequenceRow s, bool exercise) =>
        (exercise ? "EXERCISE: " : "") + (s.Name ?? string.Create(
            CultureInfo.InvariantCulture, $"Magnitude {s.MainshockMagnitude:0.0} earthquake"));

    /// <summary>The earliest time t with t - issue ≥ cadence(t - mainshock): the cadence only grows with time, so
    /// iterating t = issue + cadence(t) from t = issue reaches it in at most three steps.</summary>
    public static Freshness FreshnessOf(DateTime mainshockUtc, DateTime issueUtc)
    {
        var t = issueUtc;
        for (var i = 0; i < 10; i++)
        {
            var next = issueUtc + RefitSchedule.Interval((t - mainshockUtc).TotalDays);
            if (next == t) break;
            t = next;
        }
        return new Freshness(issueUtc, t, (t - issueUtc).TotalHours, FreshnessRule);
    }

    public static async Task<PlotInput> PlotInputAsync(SequenceRow s, ForecastRecord f, ForecastResult r,
        SequenceStore sequences, CancellationToken ct)
    {
        var members = await sequences.MembersAsync(s, f.IssueTime, ct);
        var events = members.Foreshocks.Select(e => Event(e, EventRole.Foreshock))
            .Append(Event(members.Mainshock, EventRole.Mainshock))
            .Concat(members.Aftershocks.Select(e => Event(e, EventRole.Aftershock)))
            .ToList();
        return PlotInputs.FromResult(r, Title(s, exercise: false), f.Exercise, f.Number, f.State, s.CentreLatitude,
            s.CentreLongitude, s.ZoneRadiusKm, events);

        static PlotEvent Event(MemberEvent e, EventRole role) => new(
            e.OriginTime, e.Latitude, e.Longitude, e.Magnitude, role);
    }

    public static DashboardView View(SequenceRow s, ForecastRecord f, ForecastResult r, PlotInput plots, string agency,
        Func<PlotKind, string> plotUrl, bool withDiagnostics)
    {
        var table = r.Table.Select(row =>
        {
            var p = Math.Clamp(row.Probability, 0, 1);
            return new DashboardRow(row.T1Days, row.T2Days, row.StartUtc, row.EndUtc, Window(row.T2Days - row.T1Days),
                row.MinMagnitude, row.Probability, LikelihoodWords.Percent(p), LikelihoodWords.For(p), row.ExpectedNumber,
                row.Median, row.Low95, row.High95, row.BackgroundProbability,
                row.BackgroundProbability is { } b ? LikelihoodWords.Percent(Math.Clamp(b, 0, 1)) : null, row.Gain);
        }).ToList();
        var plotList = PlotKinds.All.Select(k =>
        {
            var (title, description) = DashboardPlots.Describe(k, plots);
            return new DashboardPlot(PlotKinds.Slug(k), title, description, plotUrl(k));
        }).ToList();
        DashboardDiagnostics? diagnostics = null;
        if (withDiagnostics)
        {
            using var doc = JsonDocument.Parse(f.Result);
            var root = doc.RootElement;
            JsonElement Part(string name) => root.TryGetProperty(name, out var e) ? e.Clone() : default;
            diagnostics = new DashboardDiagnostics(f.Reason, f.EngineVersion, f.ParameterSet, r.FitStartDays,
                r.FitStartSource, r.FitEndDays, r.AftershockCount, Part("completeness"), Part("bValue"), Part("omori"),
                Part("posterior"), Part("prior"), Part("notes"), f.CatalogHash);
        }
        return new DashboardView(f.SequenceId, f.Number, f.State, f.Exercise, SequenceView.ExerciseNotice(f.Exercise),
            Title(s, f.Exercise), agency, AdvisoryBuilder.Cautions(agency), f.IssueTime, f.CreatedAt, f.ReleasedAt,
            f.WithdrawnAt, f.MainshockMagnitude, r.MainshockTimeUtc, s.CentreLatitude, s.CentreLongitude, s.ZoneRadiusKm,
            f.EventCount, f.PublishedAdvisory, FreshnessOf(
                r.MainshockTimeUtc, f.IssueTime), table, plotList, diagnostics);
    }

    static string Window(double days) => days switch
    {
        _ when Math.Abs(days - 1) < 1e-6 => "next day",
        _ when Math.Abs(days - 7) < 1e-6 => "next week",
        _ when Math.Abs(days - 30) < 1e-6 => "next 30 days",
        _ when Math.Abs(days - 365) < 1e-6 => "next year",
        _ => string.Create(CultureInfo.InvariantCulture, $"next {days:0.#} days"),
    };
}
