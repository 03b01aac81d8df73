using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Text.Json.Serialization;
using Forecast.Core;
using Forecast.Core.Advisory;
using Forecast.Core.Background;
using Forecast.Core.Forecasting;
using Forecast.Core.ReasenbergJones;
using Forecast.Storage.Sequences;

namespace Forecast.Storage.Forecasts;

/// <summary>Computes a sequence's forecast from the catalog as it stands and stores it as a draft.</summary>
/// <remarks>The same path serves the refit worker, "compute now" and the demo: reconcile the sequence (takeover,
/// zone), take its member events up to the issue time, run <see cref="ForecastEngine"/>, write the advisory from
/// the numbers, store.</remarks>
public sealed class ForecastService(SequenceStore sequences, ForecastStore forecasts, ForecastSettings settings,
    TimeProvider clock)
{
    /// <summary>How the engine's result is written to jsonb: web names, and NaN / infinity as strings rather than
    /// an exception (the engine reports undefined estimates as null, but a stray one must not lose a forecast).</summary>
    public static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web)
    {
        NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals,
    };

    /// <summary>Advisory statements cover these windows (days) when the table has them.</summary>
    static readonly double[] AdvisoryWindowDays = [1, 7, 30];

    /// <summary>Computes and stores a draft. With <paramref name="skipIfUnchanged"/>, nothing is stored when the
    /// latest forecast saw the same catalog with the same options (a refit the catalog did not need).</summary>
    /// <exception cref="SequenceException">The sequence cannot be fitted as it stands.</exception>
    /// <exception cref="ArgumentException">The options are impossible (for example an issue time before the
    /// mainshock).</exception>
    public async Task<ForecastRecord?> ComputeAsync(long sequenceId, ComputeOptions options, string reason, long? keyId,
        bool skipIfUnchanged, CancellationToken ct)
    {
        await sequences.ReconcileAsync(sequenceId, ct);
        var s = await sequences.FindAsync(sequenceId, ct) ?? throw new SequenceException($"No sequence {sequenceId}.");
        var issue = options.IssueTimeUtc ?? clock.GetUtcNow().UtcDateTime;
        var members = await sequences.MembersAsync(s, issue, ct);
        if (issue < members.Mainshock.OriginTime)
            throw new ArgumentException("The issue time is before the mainshock.", nameof(options));

        var parameterSetName = options.ParameterSet ?? s.ParameterSet;
        if (!GenericParameterSets.TryGet(parameterSetName, out var prior))
            throw new ArgumentException($"Unknown generic parameter set '{parameterSetName}'. Known sets: " +
                                        string.Join(", ", GenericParameterSets.All.Select(p => p.Name)) + ".", nameof(options));

        var all = members.Foreshocks.Append(members.Mainshock).Concat(members.Aftershocks).ToList();
        var hash = CatalogHash(all);
        var optionsJson = JsonSerializer.Serialize(new
        {
            options.IssueTimeUtc, mc = options.Mc ?? s.Mc, fitStartDays = options.FitStartDays ?? s.FitStartDays,
            parameterSet = prior.Name, options.WindowDays, options.Thresholds, s.BackgroundRatePerDay,
            s.BackgroundMagnitude, mainshock = members.Mainshock.Pk, s.Exercise,
        }, Json);
        if (skipIfUnchanged && await forecasts.LatestAsync(sequenceId, releasedOnly: false, ct) is { } last
            && last.CatalogHash == hash && Canonical(last.Options) == Canonical(optionsJson))
        {
            return null;
        }

        var main = ToCatalog(members.Mainshock);
        var issueDays = (issue - main.TimeUtc).TotalDays;
        var request = new ForecastRequest
        {
            Mainshock = main,
            Events = members.Aftershocks.Select(ToCatalog).ToList(),
            IssueTimeUtc = issue,
            Prior = prior,
            Mc = options.Mc ?? s.Mc,
            FitStartDays = options.FitStartDays ?? s.FitStartDays,
            Windows = options.WindowDays?.Select(d => new ForecastWindow(issueDays, issueDays + d)).ToList(),
            Thresholds = options.Thresholds,
            Background = s.BackgroundRatePerDay is { } rate && s.BackgroundMagnitude is { } bgMag
                ? new BackgroundRate(rate, bgMag, prior.Mean.B, "set on the sequence by an analyst")
                : await CatalogBackgroundAsync(s, prior.Mean.B, ct),
            BootstrapSamples = settings.BootstrapSamples,
            Seed = settings.Seed,
        };
        var result = ForecastEngine.Run(request);
        var advisory = Advisory(s, result, settings.AgencyName);

        var lastEvent = members.Aftershocks.Count > 0 ? members.Aftershocks[^1].OriginTime : members.Mainshock.OriginTime;
        return await forecasts.InsertAsync(new ForecastStore.NewForecast(
            sequenceId, reason, s.Exercise, issue, result.EngineVersion, prior.Name, members.Mainshock.Pk,
            main.Magnitude, result.Completeness.Mc, result.FitStartDays, all.Count, lastEvent, hash,
            JsonSerializer.Serialize(result, Json), optionsJson, advisory.Text, keyId), ct);
    }

    /// <summary>The background rate from the zone's own catalog before the sequence (its foreshock window
    /// excluded), declustered with Gardner &amp; Knopoff (1974) and counted as a Poisson process
    /// (<see cref="PoissonBackground"/>); null when the history holds too few independent events.</summary>
    async Task<BackgroundRate?> CatalogBackgroundAsync(SequenceRow s, double b, CancellationToken ct)
    {
        var to = s.MainshockTime.AddDays(-s.ForeshockDays);
        var from = to.AddDays(-settings.BackgroundYears * 365.25);
        var history = await sequences.HistoryAsync(s, from, to, ct);
        if (history.Count(e => e.Magnitude >= settings.BackgroundMinMagnitude) < settings.BackgroundMinEvents) return null;
        const double windowDays = 30;
        var estimate = PoissonBackground.Estimate(history.Select(ToCatalog).ToList(), settings.BackgroundMinMagnitude,
            from, to, windowDays);
        if (estimate.EventCount < settings.BackgroundMinEvents) return null;
        return new BackgroundRate(estimate.RatePerDay, settings.BackgroundMinMagnitude, b, string.Create(
            CultureInfo.InvariantCulture,
            $"{estimate.EventCount} independent events of M >= {settings.BackgroundMinMagnitude} in the zone over the {settings.BackgroundYears} years before the sequence (declustered, Gardner & Knopoff 1974)"));
    }

    /// <summary>The advisory of a result: windows of a day, a week and a month from the issue time; magnitudes
    /// from the smallest at or above 3 (usually felt), 5 (damaging near the epicentre) and the mainshock's.</summary>
    public static AdvisoryText Advisory(SequenceRow s, ForecastResult result, string agencyName)
    {
        var table = result.Table;
        var thresholds = new List<double>();
        if (table.Select(r => r.MinMagnitude).Where(m => m >= 3).DefaultIfEmpty(double.NaN).Min() is var felt && double.IsFinite(felt))
            thresholds.Add(felt);
        thresholds.AddRange(table.Select(r => r.MinMagnitude).Where(m => Math.Abs(m - 5) < 1e-9 || Math.Abs(m - result.MainshockMagnitude) < 1e-9));
        var windows = table.Where(r => AdvisoryWindowDays.Any(d => Math.Abs(r.T2Days - r.T1Days - d) < 1e-9)).ToList();
        var cells = (windows.Count > 0 ? windows : table)
            .Where(r => thresholds.Count == 0 || thresholds.Any(m => Math.Abs(m - r.MinMagnitude) < 1e-9))
            .Select(r => new AdvisoryCell(r.T1Days, r.T2Days, r.MinMagnitude, r.Probability, r.ExpectedNumber, r.Median,
                r.Low95, r.High95, r.BackgroundProbability))
            .ToList();
        var title = s.Name ?? string.Create(CultureInfo.InvariantCulture,
            $"magnitude {result.MainshockMagnitude:0.0} earthquake ({s.MainshockSource}/{s.MainshockEventId})");
        return AdvisoryBuilder.Build(new AdvisoryInput(agencyName, title, result.MainshockMagnitude,
            result.MainshockTimeUtc, result.IssueTimeUtc, s.Exercise, cells));
    }

    static CatalogEvent ToCatalog(MemberEvent e) =>
        new($"{e.Source}/{e.EventId}", e.OriginTime, e.Latitude, e.Longitude, e.DepthKm, e.Magnitude);

    /// <summary>SHA-256 over the member events' identity and content in time order: equal hashes mean the fit saw
    /// the same catalog.</summary>
    public static string CatalogHash(IEnumerable<MemberEvent> events)
    {
        var text = new StringBuilder();
        foreach (var e in events.OrderBy(e => e.OriginTime).ThenBy(e => e.Pk))
        {
            text.Append(CultureInfo.InvariantCulture,
                $"{e.Source}\u001f{e.EventId}\u001f{e.OriginTime.Ticks}\u001f{e.Latitude:R}\u001f{e.Longitude:R}\u001f{e.DepthKm:R}\u001f{e.Magnitude:R}\n");
        }
        return "sha256:" + Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text.ToString())));
    }

    // jsonb reorders keys and respaces the text it returns, so stored and new options are compared in a canonical
    // form: keys sorted, numbers as round-trip doubles.
    static string Canonical(string json)
    {
        using var doc = JsonDocument.Parse(json);
        var text = new StringBuilder();
        Write(doc.RootElement, text);
        return text.ToString();
    }

    static void Write(JsonElement e, StringBuilder text)
    {
        switch (e.ValueKind)
        {
            case JsonValueKind.Object:
                text.Append('{');
                foreach (var p in e.EnumerateObject().OrderBy(p => p.Name, StringComparer.Ordinal))
                {
                    text.Append(p.Name).Append(':');
                    Write(p.Value, text);
                    text.Append(',');
                }
                text.Append('}');
                break;
            case JsonValueKind.Array:
                text.Append('[');
                foreach (var item in e.EnumerateArray())
                {
                    Write(item, text);
                    text.Append(',');
                }
                text.Append(']');
                break;
            case JsonValueKind.Number:
                text.Append(e.GetDouble().ToString("R", CultureInfo.InvariantCulture));
                break;
            default:
                text.Append(e.GetRawText());
                break;
        }
    }
}
