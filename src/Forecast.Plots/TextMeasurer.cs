using OxyPlot;

namespace Forecast.Plots;

/// <summary>OxyPlot's PDF context as a text measurer for SVG: it answers in points, the SVG is laid out in CSS
/// pixels, so sizes are scaled by 96 / 72 (CSS 2.1: 1 px = 0.75 pt).</summary>
internal sealed class TextMeasurer(double width, double height, OxyColor background)
    : PdfRenderContext(width, height, background)
{
    const double PixelsPerPoint = 96.0 / 72.0;

    public override OxySize MeasureText(string text, string fontFamily, double fontSize, double fontWeight)
    {
        var size = base.MeasureText(text, fontFamily, fontSize, fontWeight);
        return new OxySize(size.Width * PixelsPerPoint, size.Height * PixelsPerPoint);
    }
}
