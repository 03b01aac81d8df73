using System.Text.Json;
using System.Xml;
using System.Xml.Linq;
using Forecast.Core.Advisory;
using Forecast.Core.Catalog;
using Forecast.Core.GutenbergRichter;
using Forecast.Core.Omori;

namespace Forecast.Plots.Tests;

public class DashboardPlotsTests
{
    static readonly XNamespace Svg = "http://www.w3.org/2000/svg";

    static XDocument Parse(string svg)
    {
        // Prohibit DTDs as a careful consumer would: the output must not need one.
        using var reader = XmlReader.Create(new StringReader(svg), new XmlReaderSettings { DtdProcessing = DtdProcessing.Prohibit });
        return XDocument.Load(reader);
    }

    static JsonElement Data(XDocument doc) =>
        JsonDocument.Parse(doc.Root!.Element(Svg + "metadata")!.Value).RootElement;

    static IEnumerable<string> Texts(XDocument doc) => doc.Descendants(Svg + "text").Select(t => t.Value);

    public static TheoryData<PlotKind> Kinds() => new(PlotKinds.All);

    [Theory]
    [MemberData(nameof(Kinds))]
    public void EveryPlotIsWellFormedSvgWithATitleADescriptionAndTheExerciseMarker(PlotKind kind)
    {
        var (input, _, _) = SimulatedForecast.Make();
        var plot = DashboardPlots.Render(kind, input);
        Artifacts.Save($"plot-{PlotKinds.Slug(kind)}.svg", plot.Svg);
        var doc = Parse(plot.Svg);
        var root = doc.Root!;
        Assert.Equal(Svg + "svg", root.Name);
        Assert.Equal("img", (string?)root.Attribute("role"));
        var title = root.Elements().First();
        Assert.Equal(Svg + "title", title.Name);
        Assert.StartsWith("EXERCISE: ", title.Value);
        Assert.Equal((string?)root.Attribute("aria-labelledby"), (string?)title.Attribute("id"));
        var desc = root.Element(Svg + "desc")!;
        Assert.Equal(plot.Description, desc.Value);
        Assert.True(desc.Value.Length > 80, desc.Value);
        // The marker is drawn too, not only in the text alternative.
        Assert.Contains(Texts(doc), t => t.StartsWith("EXERCISE: ", StringComparison.Ordinal));
        Assert.Contains(Texts(doc), t => t.Contains(AdvisoryBuilder.ExerciseMarker, StringComparison.Ordinal));
        Assert.DoesNotContain("<script", plot.Svg, StringComparison.OrdinalIgnoreCase);
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void ARealForecastCarriesNoExerciseMarker(PlotKind kind)
    {
        var (input, _, _) = SimulatedForecast.Make(exercise: false);
        var doc = Parse(DashboardPlots.Render(kind, input).Svg);
        Assert.DoesNotContain("EXERCISE", doc.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void TheTablePlotHasABarAndALabelWithNumberAndWordForEveryCell()
    {
        var (input, result, _) = SimulatedForecast.Make();
        var doc = Parse(DashboardPlots.Render(PlotKind.Table, input).Svg);
        var rows = Data(doc).GetProperty("rows").EnumerateArray().ToList();
        Assert.Equal(result.Table.Count, rows.Count);
        var texts = Texts(doc).ToList();
        foreach (var (row, cell) in rows.Zip(result.Table))
        {
            Assert.Equal(cell.Probability, row.GetProperty("probability").GetDouble());
            var label = $"{LikelihoodWords.Percent(cell.Probability)} ({LikelihoodWords.For(cell.Probability)})";
            Assert.Equal(label, row.GetProperty("label").GetString());
            Assert.Contains(label, texts);
        }
    }

    [Fact]
    public void TheFrequencyMagnitudePlotCountsTheFitWindowAndDrawsTheGutenbergRichterLineFromMc()
    {
        var (input, result, catalog) = SimulatedForecast.Make();
        var doc = Parse(DashboardPlots.Render(PlotKind.FrequencyMagnitude, input).Svg);
        var data = Data(doc);
        var window = catalog.Skip(1).Where(e =>
        {
            var t = (e.TimeUtc - SimulatedForecast.MainshockUtc).TotalDays;
            return t >= result.FitStartDays && t <= result.FitEndDays;
        }).Select(e => e.Magnitude).ToArray();
        var fmd = FrequencyMagnitudeDistribution.Compute(window, result.Completeness.BinWidth);
        Assert.Equal(window.Length, data.GetProperty("count").GetInt32());
        Assert.Equal(fmd.IncrementalCounts, data.GetProperty("incremental").EnumerateArray().Select(x => x.GetInt32()));
        Assert.Equal(result.Completeness.Mc, data.GetProperty("mc").GetDouble());
        Assert.Equal(result.BValue.B, data.GetProperty("b").GetDouble());
        var nMc = window.Count(m => m >= result.Completeness.Mc - result.Completeness.BinWidth / 2 - 1e-9);
        Assert.Equal(GutenbergRichterLaw.AValue(nMc, result.BValue.B, result.Completeness.Mc), data.GetProperty("a").GetDouble(), 1e-12);
        Assert.Contains(Texts(doc), t => t.StartsWith($"Mc {result.Completeness.Mc:0.0}", StringComparison.Ordinal));
        Assert.Contains(Texts(doc), t => t.Contains($"b = {result.BValue.B:0.00}", StringComparison.Ordinal));
    }

    [Fact]
    public void TheCumulativePlotExpectsTheModelIntegralAndItsPoissonRange()
    {
        var (input, result, _) = SimulatedForecast.Make();
        var data = Data(Parse(DashboardPlots.Render(PlotKind.Cumulative, input).Svg));
        var p = result.Posterior;
        // Reasenberg & Jones (1989): N(S, T) = 10^(a + b (Mm - Mc)) * integral of (t + c)^-p.
        var expected = Math.Pow(10, p.A + p.B * (result.MainshockMagnitude - result.Completeness.Mc))
            * OmoriUtsu.Integral(Math.Pow(10, p.Log10C), p.P, result.FitStartDays, result.IssueDays);
        Assert.Equal(expected, data.GetProperty("expectedAtIssue").GetDouble(), expected * 1e-12);
        // MathNet's Poisson quantiles: the band brackets the mean.
        Assert.True(data.GetProperty("low95AtIssue").GetDouble() <= expected);
        Assert.True(data.GetProperty("high95AtIssue").GetDouble() >= expected);
        Assert.Equal(input.FitEvents.Count(), data.GetProperty("observedCount").GetInt32());
    }

    [Theory]
    // Poisson(10): P(X <= 3) = 0.0103, P(X <= 4) = 0.0293, P(X <= 16) = 0.9730, P(X <= 17) = 0.9857 (MathNet CDF).
    [InlineData(10.0, 0.025, 4)]
    [InlineData(10.0, 0.975, 17)]
    [InlineData(0.0, 0.975, 0)]
    // Poisson(0.5): P(X <= 0) = 0.607, P(X <= 1) = 0.910, P(X <= 2) = 0.986.
    [InlineData(0.5, 0.975, 2)]
    public void PoissonQuantilesAreTheSmallestCountReachingTheLevel(double mean, double q, double expected) =>
        Assert.Equal(expected, DashboardPlots.PoissonQuantile(mean, q));

    [Fact]
    public void TheRatePlotBinsEveryFitEventAndDrawsTheOmoriFit()
    {
        var (input, result, _) = SimulatedForecast.Make(days: 5);
        var data = Data(Parse(DashboardPlots.Render(PlotKind.Rate, input).Svg));
        var bins = data.GetProperty("bins").EnumerateArray().ToList();
        Assert.Equal(input.FitEvents.Count(), bins.Sum(b => b.GetProperty("count").GetInt32()));
        foreach (var b in bins)
        {
            var width = b.GetProperty("toDays").GetDouble() - b.GetProperty("fromDays").GetDouble();
            Assert.Equal(b.GetProperty("count").GetInt32() / width, b.GetProperty("ratePerDay").GetDouble(), 1e-9);
        }
        Assert.Equal(result.Omori.K, data.GetProperty("omoriK").GetDouble());
        Assert.Equal(result.Omori.P, data.GetProperty("omoriP").GetDouble());
    }

    [Fact]
    public void TheMapDrawsTheZoneAndAScaleBarNoLongerThanHalfTheView()
    {
        var (input, _, catalog) = SimulatedForecast.Make();
        var doc = Parse(DashboardPlots.Render(PlotKind.Map, input).Svg);
        var data = Data(doc);
        Assert.Equal(catalog.Count, data.GetProperty("eventCount").GetInt32());
        Assert.Equal(40, data.GetProperty("zoneRadiusKm").GetDouble());
        var scale = data.GetProperty("scaleKm").GetDouble();
        Assert.Contains(scale, new[] { 1.0, 2, 5, 10, 20, 50, 100 });
        Assert.Contains(Texts(doc), t => t == $"{scale:0.##} km");
        Assert.Contains(Texts(doc), t => t.Contains("radius 40 km", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData(0.9, 0.5)]
    [InlineData(17, 10)]
    [InlineData(4.9, 2)]
    [InlineData(52, 50)]
    public void ScaleBarLengthsAreOneTwoOrFiveTimesAPowerOfTen(double x, double expected) =>
        Assert.Equal(expected, DashboardPlots.NiceLength(x), 1e-12);

    [Theory]
    [MemberData(nameof(Kinds))]
    public void ASequenceWithOnlyItsMainshockStillPlots(PlotKind kind)
    {
        var (input, _, _) = SimulatedForecast.Make();
        var lonely = input with { Events = input.Events.Where(e => e.Role == EventRole.Mainshock).ToList(), Omori = null };
        var plot = DashboardPlots.Render(kind, lonely);
        Assert.NotNull(Parse(plot.Svg).Root);
    }

    [Fact]
    public void TheSameInputGivesTheSameSvg()
    {
        var (a, _, _) = SimulatedForecast.Make(seed: 11);
        var (b, _, _) = SimulatedForecast.Make(seed: 11);
        foreach (var kind in PlotKinds.All)
            Assert.Equal(DashboardPlots.Render(kind, a).Svg, DashboardPlots.Render(kind, b).Svg);
    }
}
