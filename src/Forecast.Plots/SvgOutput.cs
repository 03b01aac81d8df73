using System.Text.Json;
using System.Xml;
using System.Xml.Linq;
using OxyPlot;

namespace Forecast.Plots;

/// <summary>Exports a figure with OxyPlot's SVG exporter and adds what the exporter leaves out: a text alternative
/// and the plotted numbers.</summary>
/// <remarks>Text alternatives after WCAG 2.1 success criterion 1.1.1 and the SVG accessibility practice of a first
/// <c>title</c> and <c>desc</c> child referenced by <c>aria-labelledby</c> / <c>aria-describedby</c> with
/// <c>role="img"</c> (W3C SVG Accessibility API Mappings). The numbers go in <c>metadata</c> as JSON.</remarks>
internal static class SvgOutput
{
    static readonly XNamespace Svg = "http://www.w3.org/2000/svg";

    static readonly JsonSerializerOptions Json = new(JsonSerializerDefaults.Web)
    {
        NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals,
    };

    /// <summary>Widens the shorter-scaled axis of a rendered model so that a data unit has the same length in
    /// pixels both ways; true when a range changed.</summary>
    static bool EqualiseAxes(PlotModel model)
    {
        var area = model.PlotArea;
        var x = model.Axes.First(a => a.IsHorizontal());
        var y = model.Axes.First(a => a.IsVertical());
        if (area.Width <= 0 || area.Height <= 0) return false;
        var xPerPixel = (x.Maximum - x.Minimum) / area.Width;
        var yPerPixel = (y.Maximum - y.Minimum) / area.Height;
        var target = Math.Max(xPerPixel, yPerPixel);
        Widen(x, target * area.Width);
        Widen(y, target * area.Height);
        return Math.Abs(xPerPixel - yPerPixel) > 1e-9 * target;

        static void Widen(OxyPlot.Axes.Axis axis, double span)
        {
            var mid = (axis.Maximum + axis.Minimum) / 2;
            axis.Minimum = mid - span / 2;
            axis.Maximum = mid + span / 2;
        }
    }

    public static string Export(Figure f, PlotKind kind)
    {
        // OxyPlot measures text with its built-in PDF font metrics (Helvetica; see TextMeasurer): pure managed.
        var raw = SvgExporter.ExportToString(f.Model, f.Width, f.Height, isDocument: true,
            textMeasurer: new TextMeasurer(f.Width, f.Height, f.Model.Background));
        if (f.EqualAspect && EqualiseAxes(f.Model))
        {
            raw = SvgExporter.ExportToString(f.Model, f.Width, f.Height, isDocument: true,
                textMeasurer: new TextMeasurer(f.Width, f.Height, f.Model.Background));
        }
        XDocument doc;
        var settings = new XmlReaderSettings { DtdProcessing = DtdProcessing.Ignore };
        using (var reader = XmlReader.Create(new StringReader(raw), settings))
        {
            doc = XDocument.Load(reader);
        }
        doc.DocumentType?.Remove();
        var root = doc.Root ?? throw new InvalidOperationException("OxyPlot wrote an empty SVG.");
        var slug = PlotKinds.Slug(kind);
        root.SetAttributeValue("role", "img");
        root.SetAttributeValue("aria-labelledby", $"{slug}-title");
        root.SetAttributeValue("aria-describedby", $"{slug}-desc");
        root.SetAttributeValue("viewBox", FormattableString.Invariant($"0 0 {f.Width} {f.Height}"));
        root.SetAttributeValue("data-plot", slug);
        root.AddFirst(
            new XElement(Svg + "title", new XAttribute("id", $"{slug}-title"), f.Title),
            new XElement(Svg + "desc", new XAttribute("id", $"{slug}-desc"), f.Description),
            new XElement(Svg + "metadata", new XAttribute("id", $"{slug}-data"),
                JsonSerializer.Serialize(f.Data, Json)));
        return doc.Declaration is null
            ? doc.ToString(SaveOptions.DisableFormatting)
            : doc.Declaration + doc.ToString(SaveOptions.DisableFormatting);
    }
}
