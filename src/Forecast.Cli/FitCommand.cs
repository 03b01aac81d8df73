using System.CommandLine;
using System.Globalization;
using System.Text;
using System.Text.Json;
using System.Text.Json.Serialization;
using Forecast.Core;
using Forecast.Core.Forecasting;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Cli;

/// <summary><c>forecast fit FILE</c>: the whole forecast of one catalog file, as JSON or a readable table.</summary>
static class FitCommand
{
    public static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web)
    {
        WriteIndented = true,
        Converters = { new JsonStringEnumConverter() },
    };

    public static Command Create()
    {
        var file = new Argument<FileInfo>("file") { Description = "catalog file: CSV (header: id, time, lat, lon, depth, mag), QuakeML 1.2 or FDSN event text" };
        var mainshock = new Option<string?>("--mainshock") { Description = "id of the mainshock (default: the largest event)" };
        var mc = new Option<double?>("--mc") { Description = "completeness magnitude (default: estimated)" };
        var fitStart = new Option<string?>("--fit-start") { Description = "fit start: days after the mainshock, or a UTC time" };
        var fitEnd = new Option<string?>("--fit-end") { Description = "fit end: days after the mainshock, or a UTC time" };
        var at = new Option<string?>("--at") { Description = "issue time, UTC (default: the last event's time)" };
        var regime = new Option<string>("--regime")
        {
            Description = "generic parameter set: " + string.Join(", ", GenericParameterSets.All.Select(s => s.Name)),
            DefaultValueFactory = _ => GenericParameterSets.ReasenbergJones1989.Name,
        };
        var format = new Option<string>("--format") { Description = "json or table", DefaultValueFactory = _ => "json" };
        format.AcceptOnlyFromAmong("json", "table");
        var bootstrap = new Option<int>("--bootstrap") { Description = "bootstrap resamples for Mc", DefaultValueFactory = _ => 100 };
        var seed = new Option<int>("--seed") { Description = "seed of the bootstrap", DefaultValueFactory = _ => 1 };

        var command = new Command("fit", "Fit a catalog file and print the forecast")
        {
            file, mainshock, mc, fitStart, fitEnd, at, regime, format, bootstrap, seed,
        };
        command.SetAction(parse => CliException.Guard(() =>
        {
            var path = parse.GetValue(file)!;
            if (!path.Exists) throw new CliException($"No such file: {path.FullName}");
            var events = CatalogFiles.Read(path);
            if (events.Count == 0) throw new CliException("The catalog holds no events.");

            var main = parse.GetValue(mainshock) is { } id
                ? events.FirstOrDefault(e => e.Id == id) ?? throw new CliException($"No event '{id}' in the catalog.")
                : events.MaxBy(e => e.Magnitude)!;
            if (!GenericParameterSets.TryGet(parse.GetValue(regime)!, out var prior))
                throw new CliException($"Unknown --regime '{parse.GetValue(regime)}'.");
            var issue = parse.GetValue(at) is { } atText
                ? CatalogCsv.ParseTime(atText) ?? throw new CliException($"--at '{atText}' is not a time.")
                : events.Max(e => e.TimeUtc);
            if (issue < main.TimeUtc) throw new CliException("The issue time (--at) is before the mainshock.");

            var result = ForecastEngine.Run(new ForecastRequest
            {
                Mainshock = main,
                Events = events,
                IssueTimeUtc = issue,
                Prior = prior,
                Mc = parse.GetValue(mc),
                FitStartDays = Days(parse.GetValue(fitStart), main.TimeUtc, "--fit-start"),
                FitEndDays = Days(parse.GetValue(fitEnd), main.TimeUtc, "--fit-end"),
                BootstrapSamples = parse.GetValue(bootstrap),
                Seed = parse.GetValue(seed),
            });
            Console.Out.Write(parse.GetValue(format) == "table"
                ? ForecastText.Table(result)
                : JsonSerializer.Serialize(result, Json) + Environment.NewLine);
            return 0;
        }));
        return command;
    }

    /// <summary>A number is days after the mainshock; anything else must be a UTC time.</summary>
    internal static double? Days(string? text, DateTime mainshockUtc, string option)
    {
        if (text is null) return null;
        if (double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var days))
        {
            if (!double.IsFinite(days) || days < 0) throw new CliException($"{option} must be 0 days or later.");
            return days;
        }
        var time = CatalogCsv.ParseTime(text) ?? throw new CliException($"{option} '{text}' is neither days nor a time.");
        var d = Units.DaysBetween(mainshockUtc, time);
        if (d < 0) throw new CliException($"{option} is before the mainshock.");
        return d;
    }
}

/// <summary>The readable form of a forecast result.</summary>
static class ForecastText
{
    public static string Table(ForecastResult r)
    {
        var c = CultureInfo.InvariantCulture;
        var sb = new StringBuilder();
        sb.AppendLine(c, $"Mainshock {r.MainshockId}  M{r.MainshockMagnitude:0.0}  {r.MainshockTimeUtc:yyyy-MM-dd HH:mm:ss}Z");
        sb.AppendLine(c, $"Issued {r.IssueTimeUtc:yyyy-MM-dd HH:mm:ss}Z ({r.IssueDays:0.###} days after), {r.AftershockCount} aftershocks, engine {r.EngineVersion}");
        sb.AppendLine();
        var m = r.Completeness;
        sb.AppendLine(c, $"Completeness  Mc {m.Mc:0.0#} ({m.Source}); MAXC+0.2 {Opt(m.MaxCurvatureMc)} ± {Opt(m.MaxCurvatureSigma)}, goodness of fit {Opt(m.GoodnessOfFitMc)} ± {Opt(m.GoodnessOfFitSigma)}; bin {m.BinWidth}");
        if (r.FitEndDays > r.FitStartDays)
            sb.AppendLine(c, $"Fit window    {r.FitStartDays:0.####} to {r.FitEndDays:0.####} days (start: {r.FitStartSource})");
        else
            sb.AppendLine(c, $"Fit window    none yet: the issue time, {r.FitEndDays:0.####} days, is before the fit start, {r.FitStartDays:0.####} days ({r.FitStartSource}); the forecast is the generic prior's");
        var b = r.BValue;
        sb.AppendLine(c, $"b-value       {b.B:0.000} ± {Opt(b.Sigma)} (Tinti-Mulargia {Opt(b.TintiMulargiaB)}, Aki-Utsu {Opt(b.AkiUtsuB)}; n = {b.Count}){(b.UsesGenericB ? "  generic b used: " + b.Reason : "")}");
        var o = r.Omori;
        sb.AppendLine(c, $"Omori-Utsu    {o.Status}: K {Opt(o.K)} /day (σ log10 K {Opt(o.SigmaLog10K)}), c {Opt(o.C)} d (σ log10 c {Opt(o.SigmaLog10C)}), p {Opt(o.P)} ± {Opt(o.SigmaP)}, a {Opt(o.A)} ± {Opt(o.SigmaA)}; n = {o.EventCount}");
        if (o.Status != "Converged") sb.AppendLine(c, $"              {o.Message}");
        var p = r.Posterior;
        sb.AppendLine(c, $"Prior         {r.Prior.Name}: a {r.Prior.A}, b {r.Prior.B}, p {r.Prior.P}, c {r.Prior.C} d{(r.Prior.FromMemory ? " (from memory)" : "")}");
        sb.AppendLine(c, $"Posterior     a {p.A:0.000} ± {p.SdA:0.000}, b {p.B:0.000} ± {p.SdB:0.000}, p {p.P:0.000} ± {p.SdP:0.000}, log10 c {p.Log10C:0.000} ± {p.SdLog10C:0.000}");
        sb.AppendLine();
        sb.AppendLine("window (days)       M>=   expected   P(>=1)   median  95% range");
        foreach (var row in r.Table)
        {
            sb.AppendLine(c, $"{row.T1Days,7:0.###} to {row.T2Days,-8:0.###}  {row.MinMagnitude,4:0.0}  {row.ExpectedNumber,9:0.####}  {row.Probability * 100,6:0.0} %  {row.Median,6}  {row.Low95}-{row.High95}");
        }
        foreach (var note in r.Notes) sb.AppendLine("note: " + note);
        return sb.ToString();
    }

    static string Opt(double? v) => v is { } x ? x.ToString("0.###", CultureInfo.InvariantCulture) : "n/a";
}
