using OxyPlot;
using OxyPlot.Axes;
using OxyPlot.Legends;

namespace Forecast.Plots;

/// <summary>The dashboard's plot look: one ink, a few dark series colours, and a second cue (marker shape or line
/// style) for every series so that colour is never the only signal.</summary>
/// <remarks>Contrast against the white plot background, by the WCAG 2.1 relative-luminance formula: ink 16.9:1,
/// blue 8.3:1, rust 6.6:1, green 6.4:1, violet 8.2:1; all above the 4.5:1 of success criterion 1.4.3 for text and
/// the 3:1 of 1.4.11 for graphical objects.</remarks>
internal static class PlotStyle
{
    public static readonly OxyColor Ink = OxyColor.Parse("#1A1D21");
    public static readonly OxyColor Muted = OxyColor.Parse("#4A5560");
    public static readonly OxyColor Blue = OxyColor.Parse("#1F4E8C");
    public static readonly OxyColor Rust = OxyColor.Parse("#A33A00");
    public static readonly OxyColor Green = OxyColor.Parse("#2E6B30");
    public static readonly OxyColor Violet = OxyColor.Parse("#5E3A9A");
    public static readonly OxyColor Band = OxyColor.FromAColor(56, OxyColor.Parse("#1F4E8C"));
    public static readonly OxyColor Grid = OxyColor.Parse("#D5D9DE");

    /// <summary>Arial-metric fonts first: OxyPlot lays text out with Helvetica's metrics, which Arial and Liberation
    /// Sans share, so labels and legends fit as measured.</summary>
    public const string Font = "Arial, Liberation Sans, Helvetica, sans-serif";

    /// <summary>A plot with the dashboard's look; exercises carry the marker in the title and subtitle.</summary>
    public static PlotModel Model(PlotInput input, string title, string subtitle)
    {
        var model = new PlotModel
        {
            Title = PlotText.Title(input, title),
            Subtitle = input.Exercise ? PlotText.ExerciseSubtitle + "\n" + subtitle : subtitle,
            DefaultFont = Font,
            DefaultFontSize = 13,
            TitleFontSize = 16,
            SubtitleFontSize = 12,
            TitleFontWeight = FontWeights.Bold,
            Background = OxyColors.White,
            TextColor = Ink,
            TitleColor = Ink,
            SubtitleColor = input.Exercise ? Rust : Muted,
            PlotAreaBorderColor = Muted,
            PlotAreaBorderThickness = new OxyThickness(1),
        };
        model.Legends.Add(new Legend
        {
            // Below the plot area: a legend inside would hide data (the early steep part of every decay).
            LegendPosition = LegendPosition.BottomLeft,
            LegendPlacement = LegendPlacement.Outside,
            LegendOrientation = LegendOrientation.Vertical,
            LegendBackground = OxyColor.FromAColor(235, OxyColors.White),
            LegendBorder = Muted,
            LegendTextColor = Ink,
            LegendFontSize = 12,
        });
        return model;
    }

    public static T Styled<T>(T axis, string title) where T : Axis
    {
        axis.Title = title;
        axis.TextColor = Ink;
        axis.TitleColor = Ink;
        axis.AxislineColor = Ink;
        axis.TicklineColor = Ink;
        axis.MajorGridlineStyle = LineStyle.Solid;
        axis.MajorGridlineColor = Grid;
        axis.MinorGridlineStyle = LineStyle.None;
        axis.IsZoomEnabled = false;
        axis.IsPanEnabled = false;
        return axis;
    }
}
