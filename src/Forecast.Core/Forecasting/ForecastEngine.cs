using Forecast.Core.Background;
using Forecast.Core.Catalog;
using Forecast.Core.Completeness;
using Forecast.Core.GutenbergRichter;
using Forecast.Core.Omori;
using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Forecasting;

/// <summary>A long-term rate of independent events, the background a forecast is compared with.</summary>
/// <param name="RatePerDay">Independent events per day at or above <paramref name="MinMagnitude"/>.</param>
/// <param name="MinMagnitude">Magnitude the rate refers to.</param>
/// <param name="B">b-value used to scale the rate to other thresholds.</param>
/// <param name="Source">Where the rate comes from (a declustered catalog, a configured value).</param>
public sealed record BackgroundRate(double RatePerDay, double MinMagnitude, double B, string Source);

/// <summary>Everything one forecast needs: the mainshock, the events of its sequence and the choices.</summary>
public sealed record ForecastRequest
{
    public required CatalogEvent Mainshock { get; init; }

    /// <summary>Events of the sequence; only those after the mainshock and not after the issue time are used.</summary>
    public required IReadOnlyList<CatalogEvent> Events { get; init; }

    public required DateTime IssueTimeUtc { get; init; }

    public GenericParameterSet Prior { get; init; } = GenericParameterSets.ReasenbergJones1989;

    /// <summary>A user-set completeness magnitude; estimated from the data when null.</summary>
    public double? Mc { get; init; }

    /// <summary>Start S of the fit window in days after the mainshock; Helmstetter et al. (2006) when null.</summary>
    public double? FitStartDays { get; init; }

    /// <summary>End T of the fit window in days after the mainshock; the issue time when null.</summary>
    public double? FitEndDays { get; init; }

    /// <summary>Forecast windows in days after the mainshock; one day, week, month and year from the issue time when null.</summary>
    public IReadOnlyList<ForecastWindow>? Windows { get; init; }

    /// <summary>Magnitude thresholds; M3 to M7 and the mainshock magnitude when null.</summary>
    public IReadOnlyList<double>? Thresholds { get; init; }

    public BackgroundRate? Background { get; init; }

    /// <summary>Bootstrap resamples for the uncertainty of Mc (0 skips them).</summary>
    public int BootstrapSamples { get; init; } = 100;

    public int Seed { get; init; }

    public PosteriorOptions? PosteriorOptions { get; init; }
}

/// <summary>Mc as used, with both estimators beside it.</summary>
/// <param name="Source">"user", or the estimator whose value was used.</param>
public sealed record CompletenessReport(
    double Mc, string Source, double? MaxCurvatureMc, double? MaxCurvatureSigma, double? GoodnessOfFitMc,
    double? GoodnessOfFitSigma, string? GoodnessOfFitLevel, double BinWidth, string Note);

public sealed record BValueReport(
    double B, double? TintiMulargiaB, double? AkiUtsuB, double? Sigma, int Count, bool UsesGenericB, string Reason);

/// <summary>The sequence-specific maximum-likelihood Omori-Utsu fit and the Reasenberg-Jones a it implies.</summary>
/// <param name="SigmaA">Standard error of a from those of log10 K and b (first-order propagation).</param>
public sealed record OmoriReport(
    string Status, string Message, int EventCount, double SDays, double TDays, double? K, double? C, double? P,
    double? SigmaLog10K, double? SigmaLog10C, double? SigmaP, double? A, double? SigmaA);

public sealed record PriorReport(string Name, double A, double B, double P, double C, double SigmaA, double SigmaB,
    double SigmaP, double SigmaLog10C, string Source, bool FromMemory);

/// <summary>Posterior moments of (a, b, p, log10 c); <see cref="Covariance"/> in that order.</summary>
public sealed record PosteriorReport(
    double A, double B, double P, double Log10C, double SdA, double SdB, double SdP, double SdLog10C,
    double[][] Covariance, int EventCount, int Nodes, bool CoverageOk, string Message);

/// <summary>One row of the forecast table.</summary>
public sealed record ForecastRow(
    double T1Days, double T2Days, DateTime StartUtc, DateTime EndUtc, double MinMagnitude, double ExpectedNumber,
    double Probability, long Median, long Low95, long High95, double? BackgroundProbability, double? Gain);

/// <summary>The whole forecast: what went in, every intermediate estimate and the table.</summary>
public sealed record ForecastResult(
    string EngineVersion, string MainshockId, double MainshockMagnitude, DateTime MainshockTimeUtc,
    DateTime IssueTimeUtc, double IssueDays, int AftershockCount, CompletenessReport Completeness, double FitStartDays,
    string FitStartSource, double FitEndDays, BValueReport BValue, OmoriReport Omori, PriorReport Prior,
    PosteriorReport Posterior, IReadOnlyList<ForecastRow> Table, BackgroundRate? Background, IReadOnlyList<string> Notes);

/// <summary>Runs the whole method: completeness, b, Omori-Utsu, the generic-sequence posterior, the table.</summary>
/// <remarks>
/// Steps and sources: Mc by the goodness-of-fit test (Wiemer &amp; Wyss 2000) falling back to maximum curvature
/// + 0.2 (Woessner &amp; Wiemer 2005); fit start after Helmstetter, Kagan &amp; Jackson (2006); b by Tinti &amp;
/// Mulargia (1987); Omori-Utsu by maximum likelihood (Ogata 1983); the Reasenberg &amp; Jones (1989) model with a
/// posterior over its parameters (see <see cref="RjPosterior"/>) and the Poisson-mixture table.
/// Deterministic: the same request gives the same result.
/// </remarks>
public static class ForecastEngine
{
    /// <summary>Changes whenever a change to the method could change a number.</summary>
    public const string Version = "forecast-engine/1.0";

    /// <summary>Fewer aftershocks than this: Mc is not estimated from the data (project choice).</summary>
    public const int MinEventsForMc = 25;

    /// <summary>Mc used when there are too few aftershocks to estimate it: Mm - 3.0 (project choice; with so few
    /// events the forecast rests on the prior, and Mc only decides which events the likelihood counts).</summary>
    public const double DefaultMcBelowMainshock = 3.0;

    public static ForecastResult Run(ForecastRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(request.Events);
        request.Prior.Validate();
        var main = request.Mainshock;
        var issueDays = Units.DaysBetween(main.TimeUtc, request.IssueTimeUtc);
        if (!(issueDays >= 0))
            throw new ArgumentException("The issue time must not be before the mainshock.", nameof(request));

        var notes = new List<string>();
        var after = request.Events
            .Where(e => e.Id != main.Id && e.TimeUtc > main.TimeUtc && e.TimeUtc <= request.IssueTimeUtc)
            .ToList();
        // A fixed order makes every floating-point sum, and so the result, independent of the input order. Catalogs
        // usually arrive in this order already: check in one pass before paying for a sort.
        if (!InOrder(after)) after = after.OrderBy(e => e.TimeUtc).ThenBy(e => e.Id, StringComparer.Ordinal).ToList();
        var magnitudes = after.Select(e => e.Magnitude).ToArray();
        var binWidth = MagnitudeBinning.InferBinWidth(magnitudes);

        var completeness = Completeness(request, magnitudes, binWidth, main.Magnitude, notes);
        var mc = completeness.Mc;

        var (sDays, sSource) = request.FitStartDays is { } userS
            ? (userS, "user")
            : (FitStart.Helmstetter2006(main.Magnitude, mc), "Helmstetter et al. (2006)");
        var tDays = request.FitEndDays ?? issueDays;
        if (tDays > issueDays)
        {
            notes.Add("The fit end was after the issue time; it was cut to the issue time.");
            tDays = issueDays;
        }
        if (tDays <= sDays) notes.Add("The fit window is empty: the forecast is the generic one.");

        var inWindow = after.Where(e => Time(e, main) >= sDays && Time(e, main) <= tDays).ToList();
        var windowMagnitudes = inWindow.Select(e => e.Magnitude).ToArray();
        var b = BValue.Estimate(windowMagnitudes, mc, binWidth, genericB: request.Prior.Mean.B);

        var data = new AftershockData(main.Magnitude, mc, binWidth, sDays, tDays,
            inWindow.Select(e => Time(e, main)).ToArray(), windowMagnitudes);
        var posterior = RjPosterior.Compute(request.Prior, data, request.PosteriorOptions);
        if (!posterior.CoverageOk) notes.Add(posterior.Message);

        var windows = request.Windows ?? ForecastTableBuilder.DefaultWindows(issueDays);
        var thresholds = request.Thresholds ?? ForecastTableBuilder.DefaultThresholds(main.Magnitude);
        var table = ForecastTableBuilder.Build(posterior, windows, thresholds);

        return new ForecastResult(Version, main.Id, main.Magnitude, main.TimeUtc, request.IssueTimeUtc, issueDays,
            after.Count, completeness, sDays, sSource, tDays, Report(b), Report(posterior.SequenceFit, b, main, mc, sDays, tDays),
            Report(request.Prior), Report(posterior),
            table.Cells.Select(c => Row(c, main.TimeUtc, request.Background)).ToList(), request.Background, notes);
    }

    static bool InOrder(List<CatalogEvent> events)
    {
        for (var i = 1; i < events.Count; i++)
        {
            var order = events[i - 1].TimeUtc.CompareTo(events[i].TimeUtc);
            if (order > 0 || (order == 0 && string.CompareOrdinal(events[i - 1].Id, events[i].Id) > 0)) return false;
        }
        return true;
    }

    static double Time(CatalogEvent e, CatalogEvent main) => Units.DaysBetween(main.TimeUtc, e.TimeUtc);

    static CompletenessReport Completeness(
        ForecastRequest request, double[] magnitudes, double binWidth, double mainshockMagnitude, List<string> notes)
    {
        if (magnitudes.Length < MinEventsForMc)
        {
            var fallback = request.Mc ?? mainshockMagnitude - DefaultMcBelowMainshock;
            var why = $"{magnitudes.Length} aftershocks are too few to estimate Mc (fewer than {MinEventsForMc}).";
            if (request.Mc is null) notes.Add(why + $" Mc = Mm - {DefaultMcBelowMainshock} is used.");
            return new CompletenessReport(fallback, request.Mc is null ? "default" : "user", null, null, null, null,
                null, binWidth, why);
        }
        var maxc = MaximumCurvature.Estimate(magnitudes, binWidth, request.BootstrapSamples, request.Seed);
        var gft = GoodnessOfFit.Estimate(magnitudes, binWidth, request.BootstrapSamples, request.Seed);
        var (mc, source) = request.Mc is { } user ? (user, "user") : (gft.Mc, Describe(gft.Method));
        return new CompletenessReport(mc, source, maxc.Mc, Finite(maxc.Sigma), gft.Mc, Finite(gft.Sigma),
            Describe(gft.Method), binWidth, gft.Note);
    }

    static string Describe(CompletenessMethod m) => m switch
    {
        CompletenessMethod.GoodnessOfFit95 => "goodness of fit 95 %",
        CompletenessMethod.GoodnessOfFit90 => "goodness of fit 90 %",
        CompletenessMethod.MaximumCurvatureFallback => "maximum curvature + 0.2 (goodness of fit not reached)",
        _ => "maximum curvature + 0.2",
    };

    static BValueReport Report(BValueResult b) => new(b.B, Finite(b.TintiMulargiaB), Finite(b.AkiUtsuB),
        Finite(b.Sigma), b.Count, b.UsesGenericB, b.Reason);

    static OmoriReport Report(OmoriFit? fit, BValueResult b, CatalogEvent main, double mc, double sDays, double tDays)
    {
        if (fit is null || !fit.HasEstimate)
        {
            return new OmoriReport(fit?.Status.ToString() ?? "NotAttempted",
                fit?.Message ?? "No events in the fit window.", fit?.EventCount ?? 0, sDays, tDays,
                null, null, null, null, null, null, null, null);
        }
        var a = ReasenbergJones.ReasenbergJones.AFromK(fit.K, b.B, main.Magnitude, mc);
        // a = log10 K - b (Mm - Mc): var(a) = var(log10 K) + (Mm - Mc)^2 var(b), log10 K and b independent.
        var sigmaA = Math.Sqrt(Square(fit.SigmaLog10K) + Square((main.Magnitude - mc) * b.Sigma));
        return new OmoriReport(fit.Status.ToString(), fit.Message, fit.EventCount, fit.SDays, fit.TDays,
            Finite(fit.K), Finite(fit.C), Finite(fit.P), Finite(fit.SigmaLog10K), Finite(fit.SigmaLog10C),
            Finite(fit.SigmaP), Finite(a), Finite(sigmaA));
    }

    static PriorReport Report(GenericParameterSet s) => new(s.Name, s.Mean.A, s.Mean.B, s.Mean.P, s.Mean.C,
        s.SigmaA, s.SigmaB, s.SigmaP, s.SigmaLog10C, s.Source, s.FromMemory);

    static PosteriorReport Report(PosteriorResult r)
    {
        var s = r.Summary;
        var cov = new double[4][];
        for (var i = 0; i < 4; i++)
        {
            cov[i] = new double[4];
            for (var j = 0; j < 4; j++) cov[i][j] = s.Covariance[i, j];
        }
        return new PosteriorReport(s.MeanA, s.MeanB, s.MeanP, s.MeanLog10C, s.SdA, s.SdB, s.SdP, s.SdLog10C, cov,
            r.EventCount, r.Nodes.Count, r.CoverageOk, r.Message);
    }

    static ForecastRow Row(ForecastCell c, DateTime mainshockUtc, BackgroundRate? background)
    {
        double? backgroundP = null, gain = null;
        if (background is not null)
        {
            var rate = PoissonBackground.ScaleRate(background.RatePerDay, background.B, background.MinMagnitude,
                c.MinMagnitude);
            backgroundP = PoissonBackground.Probability(rate, c.Window.T2Days - c.Window.T1Days);
            gain = Finite(PoissonBackground.ProbabilityGain(c.ProbabilityOfAtLeastOne, backgroundP.Value));
        }
        return new ForecastRow(c.Window.T1Days, c.Window.T2Days, mainshockUtc.AddDays(c.Window.T1Days),
            mainshockUtc.AddDays(c.Window.T2Days), c.MinMagnitude, c.ExpectedNumber, c.ProbabilityOfAtLeastOne,
            c.Median, c.Lower95, c.Upper95, backgroundP, gain);
    }

    static double Square(double x) => x * x;

    static double? Finite(double x) => double.IsFinite(x) ? x : null;
}
