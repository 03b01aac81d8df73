using Forecast.Core;
using Forecast.Formats;

namespace Forecast.Cli;

/// <summary>Reads a catalog file in any format <c>forecast fit</c> understands.</summary>
/// <remarks>The content decides first: a first non-blank character '&lt;' is QuakeML 1.2, '#' is FDSN event text
/// (its header line). Otherwise the extension does (.xml, .quakeml, .qml: QuakeML; .txt: FDSN text), and anything
/// else is CSV. Retracted events (QuakeML type "not existing", FDSN EventType "not existing") are left out, as
/// the service leaves them out of fits. The files' own sources are kept out of the way: the CLI fits one catalog.
/// </remarks>
public static class CatalogFiles
{
    public enum Kind { Csv, QuakeMl, FdsnText }

    public static IReadOnlyList<CatalogEvent> Read(FileInfo file)
    {
        var kind = Detect(file);
        if (kind == Kind.Csv)
        {
            using var reader = file.OpenText();
            return CatalogCsv.Read(reader);
        }
        var options = new CatalogReadOptions
        {
            NowUtc = DateTime.MaxValue - TimeSpan.FromDays(1), Source = "file", MaxCharacters = long.MaxValue,
        };
        using var stream = file.OpenRead();
        var items = kind == Kind.QuakeMl ? QuakeMl.ReadEvents(stream, options) : FdsnText.ReadEvents(stream, options);
        var result = CatalogReader.ReadAll(items);
        var name = kind == Kind.QuakeMl ? "QuakeML" : "FDSN text";
        if (result.Fatal is { } fatal) throw new CliException($"The {name} file cannot be read: {fatal.Text}.");
        if (result.Errors.Count > 0)
        {
            var shown = result.Errors.Take(10).Select(e => $"  {e.Key}: {e.Text}");
            throw new CliException($"{result.BadItems} of {result.Count} events of the {name} file are not valid:\n" +
                string.Join('\n', shown) + (result.Errors.Count > 10 ? "\n  ..." : ""));
        }
        return result.Events.Where(e => e.Status != "deleted")
            .Select(e => new CatalogEvent(e.Id, e.TimeUtc, e.Latitude, e.Longitude, e.DepthKm, e.Magnitude))
            .ToList();
    }

    public static Kind Detect(FileInfo file)
    {
        using (var reader = file.OpenText())
        {
            int c;
            while ((c = reader.Read()) >= 0 && char.IsWhiteSpace((char)c)) { }
            if (c == '<') return Kind.QuakeMl;
            if (c == '#') return Kind.FdsnText;
        }
        return file.Extension.ToLowerInvariant() switch
        {
            ".xml" or ".quakeml" or ".qml" => Kind.QuakeMl,
            ".txt" => Kind.FdsnText,
            _ => Kind.Csv,
        };
    }
}
