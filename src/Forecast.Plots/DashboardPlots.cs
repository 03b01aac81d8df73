using Forecast.Core.Advisory;
using Forecast.Core.Catalog;
using Forecast.Core.GutenbergRichter;
using Forecast.Core.Omori;
using MathNet.Numerics.Distributions;
using OxyPlot;
using OxyPlot.Annotations;
using OxyPlot.Axes;
using OxyPlot.Series;
using static Forecast.Plots.PlotText;

namespace Forecast.Plots;

/// <summary>A plot drawn: its title and text alternative, the numbers it shows, and the SVG.</summary>
/// <param name="Data">The plotted numbers, also embedded in the SVG's <c>metadata</c> element as JSON so that a
/// reader (or a test) can check them without reading pixels.</param>
public sealed record RenderedPlot(
    PlotKind Kind, string Title, string Description, IReadOnlyDictionary<string, object?> Data, string Svg);

/// <summary>A plot before export: the OxyPlot model and what it says.</summary>
/// <param name="EqualAspect">One data unit as long on both axes (maps): the exporter measures the plot area and
/// widens one axis to match.</param>
internal sealed record Figure(
    PlotModel Model, string Title, string Description, Dictionary<string, object?> Data, int Width, int Height,
    bool EqualAspect = false);

/// <summary>The dashboard's six plots of one forecast, drawn with OxyPlot and exported as accessible SVG.</summary>
public static class DashboardPlots
{
    /// <summary>Days shown after the issue time in the cumulative plot's projection: the one-week window of the
    /// advisory and the public feed's headline cell.</summary>
    public const double ProjectionDays = 7;

    /// <summary>The plot's title and text alternative without drawing it.</summary>
    public static (string Title, string Description) Describe(PlotKind kind, PlotInput input)
    {
        var f = Build(kind, input);
        return (f.Title, f.Description);
    }

    public static RenderedPlot Render(PlotKind kind, PlotInput input)
    {
        var f = Build(kind, input);
        return new RenderedPlot(kind, f.Title, f.Description, f.Data, SvgOutput.Export(f, kind));
    }

    internal static Figure Build(PlotKind kind, PlotInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        return kind switch
        {
            PlotKind.MagnitudeTime => MagnitudeTime(input),
            PlotKind.Cumulative => Cumulative(input),
            PlotKind.FrequencyMagnitude => FrequencyMagnitude(input),
            PlotKind.Rate => Rate(input),
            PlotKind.Map => Map(input),
            PlotKind.Table => Table(input),
            _ => throw new ArgumentOutOfRangeException(nameof(kind)),
        };
    }

    static Figure MagnitudeTime(PlotInput input)
    {
        const string what = "Magnitude against time";
        var model = PlotStyle.Model(input, what, Context(input));
        var fore = input.Events.Where(e => e.Role == EventRole.Foreshock).ToList();
        var after = input.Events.Where(e => e.Role == EventRole.Aftershock).ToList();
        var allDays = input.Events.Select(input.DaysAfter).DefaultIfEmpty(0).ToList();
        var xMin = Math.Min(0, allDays.Min());
        var xMax = Math.Max(input.IssueDays, allDays.Max());
        var pad = Math.Max(0.02 * (xMax - xMin), 1e-3);
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Bottom, Minimum = xMin - pad, Maximum = xMax + pad },
            "Days after the mainshock"));
        var mags = input.Events.Select(e => e.Magnitude).Append(input.Mc).ToList();
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis
            {
                Position = AxisPosition.Left, Minimum = Math.Floor(mags.Min() - 0.5),
                Maximum = Math.Ceiling(mags.Max() + 0.8),
            },
            "Magnitude"));

        if (fore.Count > 0)
        {
            model.Series.Add(Scatter($"Foreshocks ({fore.Count}), triangles",
                fore.Select(e => (input.DaysAfter(e), e.Magnitude)), MarkerType.Triangle, PlotStyle.Violet, 4));
        }
        model.Series.Add(Scatter(
            $"Aftershocks ({after.Count}), circles", after.Select(e => (input.DaysAfter(e), e.Magnitude)),
            MarkerType.Circle, PlotStyle.Blue, 3));
        model.Series.Add(Scatter(
            $"Mainshock M {N(input.MainshockMagnitude, "0.0")}, diamond", [(0.0, input.MainshockMagnitude)],
            MarkerType.Diamond, PlotStyle.Rust, 8));
        model.Annotations.Add(HorizontalLine(
            input.Mc, $"Mc {N(input.Mc, "0.0")} (dashed)", PlotStyle.Green, LineStyle.Dash));
        model.Annotations.Add(VerticalLine(
            input.FitStartDays, $"fit start, day {N(input.FitStartDays, "0.###")} (dotted)", PlotStyle.Muted,
            LineStyle.Dot));
        model.Annotations.Add(VerticalLine(input.IssueDays, "issued", PlotStyle.Ink, LineStyle.LongDash));

        var largest = after.OrderByDescending(e => e.Magnitude).FirstOrDefault();
        var description = $"{input.Events.Count} events to the issue time: {fore.Count} foreshocks, the mainshock " +
            $"of magnitude " +
            $"{N(input.MainshockMagnitude, "0.0")} at day 0 and {after.Count} aftershocks" +
            (largest is null ? "" : $", the largest of magnitude {N(largest.Magnitude, "0.0")} on day " +
            $"{N(input.DaysAfter(largest), "0.##")}") +
            $". The dashed line is the completeness magnitude Mc = {N(input.Mc, "0.0")}; the dotted line the start " +
            $"of the fit, day {N(input.FitStartDays, "0.###")}; the issue time is day {N(input.IssueDays, "0.##")}.";
        return new Figure(model, model.Title, description, new()
        {
            ["eventCount"] = input.Events.Count, ["foreshocks"] = fore.Count, ["aftershocks"] = after.Count,
            ["largestAftershockMagnitude"] = largest?.Magnitude, ["mc"] = input.Mc,
            ["fitStartDays"] = input.FitStartDays,
            ["issueDays"] = input.IssueDays,
        }, 760, 500);
    }

    static Figure Cumulative(PlotInput input)
    {
        const string what = "Cumulative number of aftershocks";
        var model = PlotStyle.Model(
            input, what,
            $"M {N(input.Mc, "0.0")} and above from the fit start; model: Reasenberg-Jones with posterior-mean " +
            $"parameters");
        var s = input.FitStartDays;
        var issue = input.IssueDays;
        var end = issue + ProjectionDays;
        var times = input.FitEvents.Select(input.DaysAfter).Where(t => t <= issue).OrderBy(t => t).ToList();
        var k = ModelK(input);
        var m = input.Model;

        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Bottom, Minimum = 0, Maximum = end * 1.01 },
            "Days after the mainshock"));
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Left, Minimum = 0 },
            "Number of aftershocks M ≥ Mc since the fit start"));

        var grid = TimeGrid(s, end, m.CDays, 160);
        var band = new AreaSeries
        {
            Title = "95 % Poisson range of the model (shaded)", Fill = PlotStyle.Band, Color = OxyColors.Transparent,
            Color2 = OxyColors.Transparent, StrokeThickness = 0,
        };
        foreach (var t in grid)
        {
            var e = Expected(k, m, s, t);
            band.Points.Add(new DataPoint(t, PoissonQuantile(e, 0.025)));
            band.Points2.Add(new DataPoint(t, PoissonQuantile(e, 0.975)));
        }
        model.Series.Add(band);
        var fitted = new LineSeries
        {
            Title = "Model expectation to the issue time (solid)", Color = PlotStyle.Rust, StrokeThickness = 2,
        };
        var projected = new LineSeries
        {
            Title = $"Model projection, next {N(ProjectionDays)} days (dashed)", Color = PlotStyle.Rust,
            StrokeThickness = 2, LineStyle = LineStyle.Dash,
        };
        foreach (var t in grid)
        {
            var point = new DataPoint(t, Expected(k, m, s, t));
            if (t <= issue) fitted.Points.Add(point);
            if (t >= issue) projected.Points.Add(point);
        }
        if (projected.Points.Count > 0 && fitted.Points.Count > 0 && projected.Points[0].X > issue)
        {
            projected.Points.Insert(0, new DataPoint(issue, Expected(k, m, s, issue)));
        }
        model.Series.Add(fitted);
        model.Series.Add(projected);

        var observed = new StairStepSeries
        {
            Title = $"Observed ({times.Count}), steps with circles", Color = PlotStyle.Blue, StrokeThickness = 2,
            MarkerType = times.Count <= 300 ? MarkerType.Circle : MarkerType.None, MarkerSize = 2.5,
            MarkerFill = PlotStyle.Blue,
        };
        observed.Points.Add(new DataPoint(s, 0));
        for (var i = 0; i < times.Count; i++) observed.Points.Add(new DataPoint(times[i], i + 1));
        observed.Points.Add(new DataPoint(issue, times.Count));
        model.Series.Add(observed);
        model.Annotations.Add(VerticalLine(issue, "issued", PlotStyle.Ink, LineStyle.LongDash));

        var atIssue = Expected(k, m, s, issue);
        var atEnd = Expected(k, m, s, end);
        var description = $"{times.Count} aftershocks of magnitude {N(input.Mc, "0.0")} or more were recorded " +
            $"between the fit start (day {N(s, "0.###")}) " +
            $"and the issue time (day {N(issue, "0.##")}). The model expects {N(atIssue, "0.#")} by the issue time " +
            $"(95 % Poisson range {N(PoissonQuantile(atIssue, 0.025), "0")} to " +
            $"{N(PoissonQuantile(atIssue, 0.975), "0")}) and {N(atEnd, "0.#")} by day {N(end, "0.##")}, " +
            $"from a = {N(m.A, "0.00")}, b = {N(m.B, "0.00")}, p = {N(m.P, "0.00")}, c = {N(m.CDays, "0.####")} days.";
        return new Figure(model, model.Title, description, new()
        {
            ["observedCount"] = times.Count, ["fitStartDays"] = s, ["issueDays"] = issue, ["endDays"] = end,
            ["expectedAtIssue"] = atIssue, ["low95AtIssue"] = PoissonQuantile(atIssue, 0.025),
            ["high95AtIssue"] = PoissonQuantile(atIssue, 0.975), ["expectedAtEnd"] = atEnd, ["kPerDay"] = k,
            ["a"] = m.A, ["b"] = m.B, ["p"] = m.P, ["cDays"] = m.CDays, ["mc"] = input.Mc,
        }, 760, 500);
    }

    static Figure FrequencyMagnitude(PlotInput input)
    {
        const string what = "Frequency-magnitude distribution";
        var s = input.FitStartDays;
        var t = input.FitEndDays;
        var mags = input.Events
            .Where(e => e.Role == EventRole.Aftershock && input.DaysAfter(e) >= s && input.DaysAfter(e) <= t)
            .Select(e => e.Magnitude).ToArray();
        var model = PlotStyle.Model(
            input, what,
            $"Aftershocks in the fit window, days {N(s, "0.###")} to {N(t, "0.##")}, bins of {N(input.BinWidth)}");
        var fmd = FrequencyMagnitudeDistribution.Compute(mags, input.BinWidth);
        var lowest = fmd.BinCentres.Count > 0 ? Math.Min(fmd.BinCentres[0], input.Mc) : input.Mc;
        var highest = fmd.BinCentres.Count > 0 ? Math.Max(fmd.BinCentres[^1], input.Mc) : input.Mc + 1;
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Bottom, Minimum = lowest - 0.3, Maximum = highest + 0.3 },
            "Magnitude"));
        model.Axes.Add(PlotStyle.Styled(
            new LogarithmicAxis
            {
                Position = AxisPosition.Left, Minimum = 0.5, Maximum = Math.Max(10, fmd.Count * 2.0),
            },
            "Number of aftershocks (logarithmic)"));

        var incremental = Scatter(
            "Per bin (squares)",
            fmd.BinCentres.Zip(fmd.IncrementalCounts).Where(p => p.Second > 0).Select(p => (p.First, (double)p.Second)),
            MarkerType.Square, PlotStyle.Blue, 4);
        var cumulative = Scatter(
            "At or above (triangles)",
            fmd.BinCentres.Zip(fmd.CumulativeCounts).Select(p => (p.First, (double)p.Second)), MarkerType.Triangle,
            PlotStyle.Rust, 4.5);
        model.Series.Add(incremental);
        model.Series.Add(cumulative);

        var nAboveMc = mags.Count(x => x >= input.Mc - input.BinWidth / 2 - 1e-9);
        double? a = null;
        if (nAboveMc > 0 && input.B > 0)
        {
            a = GutenbergRichterLaw.AValue(nAboveMc, input.B, input.Mc);
            var line = new LineSeries
            {
                Title = $"Gutenberg-Richter, b = {N(input.B, "0.00")} (solid line)", Color = PlotStyle.Green,
                StrokeThickness = 2,
            };
            for (var x = input.Mc; x <= highest + 0.3 + 1e-9; x += input.BinWidth / 2)
                line.Points.Add(new DataPoint(x, GutenbergRichterLaw.CountAtOrAbove(a.Value, input.B, x)));
            model.Series.Add(line);
        }
        model.Annotations.Add(VerticalLine(
            input.Mc, $"Mc {N(input.Mc, "0.0")} (dashed)", PlotStyle.Ink, LineStyle.Dash));
        if (mags.Length == 0) model.Subtitle += "\nNo aftershocks in the fit window yet";

        var description = $"{mags.Length} aftershocks in the fit window, counted per magnitude bin of " +
            $"{N(input.BinWidth)} (squares) and at or above each bin (triangles), on a logarithmic scale. " +
            $"The completeness magnitude Mc = {N(input.Mc, "0.0")} is the dashed line; " +
            (a is null ? "there are no events at or above it to fit." : $"the Gutenberg-Richter line through the " +
            $"{nAboveMc} events at or above it has b = {N(input.B, "0.00")} and a = {N(a.Value, "0.00")}.");
        return new Figure(model, model.Title, description, new()
        {
            ["count"] = mags.Length, ["countAtOrAboveMc"] = nAboveMc, ["mc"] = input.Mc, ["b"] = input.B, ["a"] = a,
            ["binWidth"] = input.BinWidth, ["binCentres"] = fmd.BinCentres, ["incremental"] = fmd.IncrementalCounts,
            ["cumulative"] = fmd.CumulativeCounts,
        }, 760, 520);
    }

    static Figure Rate(PlotInput input)
    {
        const string what = "Aftershock rate against time";
        var model = PlotStyle.Model(
            input, what, $"M {N(input.Mc, "0.0")} and above in the fit window; logarithmic axes");
        var times = input.FitEvents.Select(input.DaysAfter).OrderBy(x => x).ToList();
        var lo = Math.Max(input.FitStartDays, times.Count > 0 ? times[0] * 0.999 : input.FitStartDays);
        if (!(lo > 0)) lo = 1e-3;
        var hi = Math.Max(input.FitEndDays, lo * 10);
        // Five bins per decade: even counts per bin for p near 1 (common practice for Omori plots).
        var binCount = Math.Clamp((int)Math.Ceiling(5 * Math.Log10(hi / lo)), 1, 40);
        var edges = Enumerable.Range(0, binCount + 1).Select(i => lo * Math.Pow(
            hi / lo, (double)i / binCount)).ToArray();
        var bins = new List<Dictionary<string, object?>>();
        var points = new List<(double, double)>();
        for (var i = 0; i < binCount; i++)
        {
            var n = times.Count(x => x >= edges[i] && (x < edges[i + 1] || (i == binCount - 1 && x <= edges[i + 1])));
            var rate = n / (edges[i + 1] - edges[i]);
            bins.Add(new()
            {
                ["fromDays"] = edges[i], ["toDays"] = edges[i + 1], ["count"] = n, ["ratePerDay"] = rate,
            });
            if (n > 0) points.Add((Math.Sqrt(edges[i] * edges[i + 1]), rate));
        }
        model.Axes.Add(PlotStyle.Styled(
            new LogarithmicAxis { Position = AxisPosition.Bottom, Minimum = lo / 1.5, Maximum = hi * 1.5 },
            "Days after the mainshock (logarithmic)"));
        var rates = points.Select(p => p.Item2).DefaultIfEmpty(1).ToList();
        model.Axes.Add(PlotStyle.Styled(
            new LogarithmicAxis { Position = AxisPosition.Left, Minimum = rates.Min() / 5, Maximum = rates.Max() * 5 },
            "Aftershocks per day (logarithmic)"));
        model.Series.Add(Scatter(
            $"Observed, {times.Count} events in {binCount} bins " +
            $"(squares)", points, MarkerType.Square, PlotStyle.Blue, 4));

        var grid = Enumerable.Range(0, 81).Select(i => lo / 1.5 * Math.Pow(hi * 2.25 / lo, i / 80.0)).ToList();
        if (input.Omori is { } o)
        {
            var fit = new LineSeries
            {
                Title = $"Omori-Utsu fit: K {N(o.K, "0.##")}, c {N(o.CDays, "0.####")} d, p {N(o.P, "0.00")} (solid)",
                Color = PlotStyle.Green, StrokeThickness = 2,
            };
            foreach (var t in grid) fit.Points.Add(new DataPoint(t, o.K * Math.Pow(t + o.CDays, -o.P)));
            model.Series.Add(fit);
        }
        var k = ModelK(input);
        var rj = new LineSeries
        {
            Title = $"Forecast model (posterior means), p {N(input.Model.P, "0.00")} (dashed)", Color = PlotStyle.Rust,
            StrokeThickness = 2, LineStyle = LineStyle.Dash,
        };
        foreach (var t in grid) rj.Points.Add(new DataPoint(t, k * Math.Pow(t + input.Model.CDays, -input.Model.P)));
        model.Series.Add(rj);
        if (times.Count == 0) model.Subtitle += "\nNo aftershocks of M ≥ Mc in the fit window yet";

        var description = $"Rate of aftershocks of magnitude {N(input.Mc, "0.0")} or more per day, from " +
            $"{times.Count} events in {binCount} logarithmic time bins between day {N(lo, "0.###")} and day " +
            $"{N(hi, "0.##")} (squares; empty bins are not drawn). " +
            (input.Omori is { } f
                ? $"The solid line is the sequence's own Omori-Utsu fit, K (t + c)^-p with K = {N(f.K, "0.##")} per " +
                    $"day, c = {N(f.CDays, "0.####")} days, p = {N(f.P, "0.00")}; "
                : "The sequence has no Omori-Utsu fit of its own yet; ") +
            $"the dashed line is the forecast model with p = {N(input.Model.P, "0.00")} and c = " +
            $"{N(input.Model.CDays, "0.####")} days.";
        return new Figure(model, model.Title, description, new()
        {
            ["count"] = times.Count, ["bins"] = bins, ["omoriK"] = input.Omori?.K, ["omoriC"] = input.Omori?.CDays,
            ["omoriP"] = input.Omori?.P, ["modelKPerDay"] = k, ["mc"] = input.Mc,
        }, 760, 520);
    }

    static Figure Map(PlotInput input)
    {
        const string what = "Epicentres and aftershock zone";
        const int width = 680, height = 760;
        var centreText = $"{Degrees(input.CentreLatitude, "N", "S")}, {Degrees(input.CentreLongitude, "E", "W")}";
        var model = PlotStyle.Model(
            input, what, $"Centred on the mainshock at {centreText}; kilometres east and north, no base map");
        var local = input.Events.Select(e => (e, Local(input, e))).ToList();
        var extent = Math.Max(
            input.ZoneRadiusKm * 1.15,
            local.Select(p => Math.Max(Math.Abs(p.Item2.X), Math.Abs(p.Item2.Y)) * 1.1).DefaultIfEmpty(1).Max());
        var hx = extent;
        var hy = extent;
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Bottom, Minimum = -hx, Maximum = hx },
            "Kilometres east of the mainshock"));
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Left, Minimum = -hy, Maximum = hy },
            "Kilometres north of the mainshock"));

        var zone = new LineSeries
        {
            Title = $"Aftershock zone, radius {N(input.ZoneRadiusKm, "0.#")} km (dashed circle)",
            Color = PlotStyle.Green, StrokeThickness = 2, LineStyle = LineStyle.Dash,
        };
        for (var i = 0; i <= 180; i++)
        {
            var angle = 2 * Math.PI * i / 180;
            zone.Points.Add(new DataPoint(input.ZoneRadiusKm * Math.Sin(angle), input.ZoneRadiusKm * Math.Cos(angle)));
        }
        model.Series.Add(zone);
        var fore = local.Where(p => p.e.Role == EventRole.Foreshock).ToList();
        var after = local.Where(p => p.e.Role == EventRole.Aftershock).ToList();
        if (fore.Count > 0)
        {
            model.Series.Add(SizedScatter($"Foreshocks ({fore.Count}), triangles", fore, MarkerType.Triangle,
                PlotStyle.Violet));
        }
        model.Series.Add(SizedScatter(
            $"Aftershocks ({after.Count}), circles sized by magnitude", after, MarkerType.Circle, PlotStyle.Blue));
        model.Series.Add(Scatter(
            $"Mainshock M {N(input.MainshockMagnitude, "0.0")}, diamond", [(0.0, 0.0)], MarkerType.Diamond,
            PlotStyle.Rust, 9));

        var scaleKm = NiceLength(extent / 2.5);
        var x0 = -hx + hx * 0.08;
        var y0 = -hy + hy * 0.08;
        model.Annotations.Add(new PolylineAnnotation
        {
            Points =
            {
                new(x0, y0 + hy * 0.025), new(x0, y0), new(x0 + scaleKm, y0), new(x0 + scaleKm, y0 + hy * 0.025),
            },
            Color = PlotStyle.Ink, StrokeThickness = 3, LineStyle = LineStyle.Solid,
        });
        model.Annotations.Add(new TextAnnotation
        {
            Text = $"{N(scaleKm)} km", TextPosition = new DataPoint(x0 + scaleKm / 2, y0 + hy * 0.03),
            TextColor = PlotStyle.Ink, Stroke = OxyColors.Transparent,
            TextHorizontalAlignment = HorizontalAlignment.Center, TextVerticalAlignment = VerticalAlignment.Bottom,
            FontWeight = FontWeights.Bold,
        });
        model.Annotations.Add(new TextAnnotation
        {
            Text = "N ↑", TextPosition = new DataPoint(hx * 0.9, hy * 0.9), TextColor = PlotStyle.Ink,
            Stroke = OxyColors.Transparent, FontWeight = FontWeights.Bold, FontSize = 15,
        });

        var description = $"Map of {input.Events.Count} epicentres around the mainshock at {centreText}: the " +
            $"mainshock (diamond), {after.Count} aftershocks (circles, larger for larger magnitudes)" +
            (fore.Count > 0 ? $" and {fore.Count} foreshocks (triangles)" : "") +
            $". The dashed circle is the aftershock zone, radius {N(input.ZoneRadiusKm, "0.#")} km; the scale bar " +
            $"is {N(scaleKm)} km long. " +
            "Axes are kilometres east and north of the mainshock on a flat projection, adequate at this scale; no " +
            "base map is drawn.";
        return new Figure(model, model.Title, description, new()
        {
            ["eventCount"] = input.Events.Count, ["aftershocks"] = after.Count, ["foreshocks"] = fore.Count,
            ["zoneRadiusKm"] = input.ZoneRadiusKm, ["scaleKm"] = scaleKm, ["centreLatitude"] = input.CentreLatitude,
            ["centreLongitude"] = input.CentreLongitude,
            ["maxDistanceKm"] = input.Events.Select(e => GreatCircle.DistanceKm(
                input.CentreLatitude, input.CentreLongitude, e.Latitude, e.Longitude)).DefaultIfEmpty(0).Max(),
        }, width, height, EqualAspect: true);
    }

    static Figure Table(PlotInput input)
    {
        const string what = "Chance of at least one aftershock";
        var rows = input.Table;
        var model = PlotStyle.Model(
            input, what, $"Windows start at the issue time, {Utc(input.IssueTimeUtc)}; IPCC likelihood words");
        model.Legends.Clear();
        var labels = rows.Select(r => $"M ≥ {N(r.MinMagnitude, "0.0")}, {Window(r.T1Days, r.T2Days)}").ToList();
        model.Axes.Add(PlotStyle.Styled(
            new CategoryAxis
            {
                Position = AxisPosition.Left, ItemsSource = labels, StartPosition = 1, EndPosition = 0, GapWidth = 0.35,
                MajorGridlineStyle = LineStyle.None,
            },
            ""));
        model.Axes.Add(PlotStyle.Styled(
            new LinearAxis { Position = AxisPosition.Bottom, Minimum = 0, Maximum = 100, MajorStep = 20 },
            "Chance of at least one, per cent"));
        var bars = new BarSeries { FillColor = PlotStyle.Blue, StrokeColor = PlotStyle.Ink, StrokeThickness = 0.5 };
        var data = new List<Dictionary<string, object?>>();
        for (var i = 0; i < rows.Count; i++)
        {
            var r = rows[i];
            var p = Math.Clamp(r.Probability, 0, 1);
            bars.Items.Add(new BarItem(p * 100));
            var label = $"{LikelihoodWords.Percent(p)} ({LikelihoodWords.For(p)})";
            var inside = p > 0.6;
            model.Annotations.Add(new TextAnnotation
            {
                Text = label, TextPosition = new DataPoint(
                    inside ? p * 100 - 1 : p * 100 + 1, i), Stroke = OxyColors.Transparent,
                TextColor = inside ? OxyColors.White : PlotStyle.Ink, FontSize = 12,
                TextHorizontalAlignment = inside ? HorizontalAlignment.Right : HorizontalAlignment.Left,
                TextVerticalAlignment = VerticalAlignment.Middle,
            });
            data.Add(new()
            {
                ["t1Days"] = r.T1Days, ["t2Days"] = r.T2Days, ["minMagnitude"] = r.MinMagnitude,
                ["probability"] = r.Probability, ["label"] = label,
            });
        }
        model.Series.Add(bars);
        var headline = rows.OrderBy(r => Math.Abs(r.T2Days - r.T1Days - 7)).ThenBy(r => Math.Abs(r.MinMagnitude - 5))
            .FirstOrDefault();
        var description = $"Bar chart of the forecast table, {rows.Count} rows: the chance of at least one " +
            $"aftershock at or above each magnitude in each window from the issue time." +
            (headline is null ? "" : $" For example, magnitude {N(headline.MinMagnitude, "0.0")} or more in the " +
            $"{Window(headline.T1Days, headline.T2Days)}: " +
            $"{LikelihoodWords.Describe(Math.Clamp(headline.Probability, 0, 1))}.");
        return new Figure(
            model, model.Title, description, new() { ["rows"] = data }, 760, 150 + 26 * Math.Max(rows.Count, 1));
    }

    static double ModelK(PlotInput input) =>
        Math.Pow(10, input.Model.A + input.Model.B * (input.MainshockMagnitude - input.Mc));

    /// <summary>Expected number in [S, t] for events of Mc and above (Reasenberg &amp; Jones 1989; integral of
    /// Utsu's law after Ogata 1983).</summary>
    static double Expected(double k, ModelParameters m, double sDays, double tDays) =>
        tDays <= sDays ? 0 : k * OmoriUtsu.Integral(m.CDays, m.P, sDays, tDays);

    /// <summary>The smallest n with P(X ≤ n) ≥ q for X Poisson with the given mean (MathNet's CDF), searched from
    /// the normal approximation.</summary>
    internal static double PoissonQuantile(double mean, double q)
    {
        if (!(mean > 0)) return 0;
        var z = q < 0.5 ? -1.96 : 1.96;
        var n = Math.Max(0, (long)Math.Round(mean + z * Math.Sqrt(mean)));
        while (n > 0 && Poisson.CDF(mean, n - 1) >= q) n--;
        while (Poisson.CDF(mean, n) < q) n++;
        return n;
    }

    /// <summary>Points from S to the end, spaced evenly in log(t + c) so the early steep part is drawn finely,
    /// with the issue time's neighbourhood covered too.</summary>
    static List<double> TimeGrid(double sDays, double endDays, double cDays, int count)
    {
        var a = Math.Log(sDays + cDays);
        var b = Math.Log(endDays + cDays);
        var log = Enumerable.Range(0, count).Select(i => Math.Exp(a + (b - a) * i / (count - 1)) - cDays);
        var linear = Enumerable.Range(0, count / 2).Select(i => sDays + (endDays - sDays) * i / (count / 2 - 1.0));
        return log.Concat(linear).Select(t => Math.Clamp(t, sDays, endDays)).Distinct().OrderBy(t => t).ToList();
    }

    static (double X, double Y) Local(PlotInput input, PlotEvent e)
    {
        // Equirectangular about the centre: good to well under 1 % within a few hundred km (common practice).
        const double kmPerDegree = Math.PI * GreatCircle.EarthRadiusKm / 180;
        var dLon = GreatCircle.NormaliseLongitude(e.Longitude - input.CentreLongitude);
        return (
            dLon * kmPerDegree * Math.Cos(input.CentreLatitude * Math.PI / 180),
            (e.Latitude - input.CentreLatitude) * kmPerDegree);
    }

    /// <summary>1, 2 or 5 times a power of ten, not above <paramref name="x"/>.</summary>
    internal static double NiceLength(double x)
    {
        if (!(x > 0)) return 1;
        var p = Math.Pow(10, Math.Floor(Math.Log10(x)));
        return x / p >= 5 ? 5 * p : x / p >= 2 ? 2 * p : p;
    }

    static string Degrees(double value, string positive, string negative) =>
        $"{N(Math.Abs(value), "0.00")}° {(value >= 0 ? positive : negative)}";

    static ScatterSeries Scatter(
        string title, IEnumerable<(double X, double Y)> points, MarkerType marker, OxyColor colour, double size)
    {
        var s = new ScatterSeries
        {
            Title = title, MarkerType = marker, MarkerSize = size, MarkerFill = colour, MarkerStroke = PlotStyle.Ink,
            MarkerStrokeThickness = 0.6,
        };
        foreach (var (x, y) in points) s.Points.Add(new ScatterPoint(x, y));
        return s;
    }

    static ScatterSeries SizedScatter(
        string title, List<(PlotEvent e, (double X, double Y) p)> points, MarkerType marker, OxyColor colour)
    {
        var s = new ScatterSeries
        {
            Title = title, MarkerType = marker, MarkerFill = OxyColor.FromAColor(170, colour), MarkerStroke = colour,
            MarkerStrokeThickness = 1,
        };
        foreach (var (e, p) in points) s.Points.Add(new ScatterPoint(
            p.X, p.Y, Math.Clamp(1.5 + 1.6 * (e.Magnitude - 1), 2, 14)));
        return s;
    }

    static LineAnnotation HorizontalLine(double y, string text, OxyColor colour, LineStyle style) => new()
    {
        Type = LineAnnotationType.Horizontal, Y = y, Text = text, Color = colour, TextColor = colour, LineStyle = style,
        StrokeThickness = 1.5, TextHorizontalAlignment = HorizontalAlignment.Right,
    };

    static LineAnnotation VerticalLine(double x, string text, OxyColor colour, LineStyle style) => new()
    {
        Type = LineAnnotationType.Vertical, X = x, Text = text, Color = colour, TextColor = colour, LineStyle = style,
        StrokeThickness = 1.5, TextOrientation = AnnotationTextOrientation.Vertical,
    };
}
