using System.Globalization;
using CsvHelper;
using CsvHelper.Configuration;
using Forecast.Core;

namespace Forecast.Cli;

/// <summary>Reads and writes catalog CSV files: a header row, then one event per row.</summary>
/// <remarks>Column names are matched case-insensitively with the usual synonyms. Times without an offset are
/// taken as UTC, as catalog files usually mean them.</remarks>
public static class CatalogCsv
{
    static readonly string[][] Synonyms =
    [
        ["id", "event_id", "eventid"],
        ["time", "time_utc", "origin_time", "datetime"],
        ["lat", "latitude"],
        ["lon", "longitude", "long"],
        ["depth", "depth_km"],
        ["mag", "magnitude"],
    ];

    public static IReadOnlyList<CatalogEvent> Read(TextReader reader)
    {
        var config = new CsvConfiguration(CultureInfo.InvariantCulture) { TrimOptions = TrimOptions.Trim };
        using var csv = new CsvReader(reader, config);
        if (!csv.Read() || !csv.ReadHeader() || csv.HeaderRecord is not { } header)
            throw new CliException("The CSV file is empty: it needs a header row.");
        var column = Synonyms.Select(names => Array.FindIndex(header,
            h => names.Contains(h.Trim(), StringComparer.OrdinalIgnoreCase))).ToArray();
        string[] required = ["time", "lat", "lon", "mag"];
        foreach (var (names, index) in Synonyms.Zip(column))
        {
            if (index < 0 && required.Contains(names[0]))
                throw new CliException($"The CSV header has no '{names[0]}' column (accepted: {string.Join(", ", names)}).");
        }

        var events = new List<CatalogEvent>();
        while (csv.Read())
        {
            var line = csv.Parser.RawRow;
            string Field(int i) => csv.GetField(column[i]) ?? "";
            var id = column[0] >= 0 ? Field(0) : $"row-{line}";
            var time = ParseTime(Field(1)) ?? throw Bad(line, "time", Field(1));
            var lat = Number(Field(2), line, "latitude", -90, 90);
            var lon = Number(Field(3), line, "longitude", -180, 180);
            var depth = column[4] >= 0 && Field(4).Length > 0 ? Number(Field(4), line, "depth", -10, 800) : 0;
            var mag = Number(Field(5), line, "magnitude", -2, 10);
            events.Add(new CatalogEvent(id, time, lat, lon, depth, mag));
        }
        return events;
    }

    public static void Write(TextWriter writer, IEnumerable<CatalogEvent> events)
    {
        using var csv = new CsvWriter(writer, CultureInfo.InvariantCulture, leaveOpen: true);
        foreach (var h in new[] { "id", "time", "latitude", "longitude", "depth_km", "magnitude" }) csv.WriteField(h);
        csv.NextRecord();
        foreach (var e in events)
        {
            csv.WriteField(e.Id);
            csv.WriteField(e.TimeUtc.ToString("yyyy-MM-ddTHH:mm:ss.ffffffZ", CultureInfo.InvariantCulture));
            csv.WriteField(e.Latitude.ToString("R", CultureInfo.InvariantCulture));
            csv.WriteField(e.Longitude.ToString("R", CultureInfo.InvariantCulture));
            csv.WriteField(e.DepthKm.ToString("R", CultureInfo.InvariantCulture));
            csv.WriteField(e.Magnitude.ToString("0.0##", CultureInfo.InvariantCulture));
            csv.NextRecord();
        }
    }

    public static DateTime? ParseTime(string text) =>
        DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture,
            DateTimeStyles.AssumeUniversal | DateTimeStyles.AllowWhiteSpaces, out var t)
            ? t.UtcDateTime
            : null;

    static double Number(string text, int line, string what, double min, double max)
    {
        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v)
            || v < min || v > max)
        {
            throw Bad(line, what, text);
        }
        return v;
    }

    static CliException Bad(int line, string what, string text) =>
        new($"Line {line}: the {what} '{text}' is not valid.");
}
