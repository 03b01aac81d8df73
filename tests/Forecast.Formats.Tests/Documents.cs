using System.Text;

namespace Forecast.Formats.Tests;

/// <summary>Documents the tests write themselves: invented events at invented places.</summary>
static class Documents
{
    public static readonly DateTime Now = new(2026, 6, 1, 0, 0, 0, DateTimeKind.Utc);

    public static CatalogReadOptions Options(string? source = null) => new() { NowUtc = Now, Source = source };

    public const string Head = """
        <?xml version="1.0" encoding="UTF-8"?>
        <q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2" xmlns="http://quakeml.org/xmlns/bed/1.2">
          <eventParameters publicID="smi:test/ep">
        """;

    public const string Tail = """
          </eventParameters>
        </q:quakeml>
        """;

    public static string QuakeMlDoc(params string[] events) => Head + "\n" + string.Join("\n", events) + "\n" + Tail;

    public static string Origin(string id, string time = "2026-01-10T03:00:00.123456Z", string lat = "10.5",
        string lon = "-20.25", string? depthM = "8000", string mode = "automatic", string? status = null,
        string extra = "") => $"""
              <origin publicID="{id}">
                <time><value>{time}</value></time>
                <latitude><value>{lat}</value><uncertainty>0.01</uncertainty></latitude>
                <longitude><value>{lon}</value></longitude>
                {(depthM is null ? "" : $"<depth><value>{depthM}</value></depth>")}
                <evaluationMode>{mode}</evaluationMode>
                {(status is null ? "" : $"<evaluationStatus>{status}</evaluationStatus>")}
                {extra}
              </origin>
        """;

    public static string Magnitude(string id, string mag = "3.1", string? type = "ML") => $"""
              <magnitude publicID="{id}">
                <mag><value>{mag}</value></mag>
                {(type is null ? "" : $"<type>{type}</type>")}
              </magnitude>
        """;

    public static string Event(string id, string body, string agency = "zz") => $"""
            <event publicID="{id}">
              <creationInfo><agencyID>{agency}</agencyID></creationInfo>
        {body}
            </event>
        """;

    public static string SimpleEvent(string id, string mag = "3.1", string lat = "10.5") =>
        Event(id, Origin(id + "/o", lat: lat) + Magnitude(id + "/m", mag));

    public static Stream Utf8(string text) => new MemoryStream(Encoding.UTF8.GetBytes(text));

    public static CatalogReadResult ReadQuakeMl(string xml, CatalogReadOptions? options = null) =>
        CatalogReader.ReadAll(QuakeMl.ReadEvents(Utf8(xml), options ?? Options()));

    public const string FdsnHeader =
        "#EventID|Time|Latitude|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|Magnitude|MagAuthor|EventLocationName";

    public static CatalogReadResult ReadFdsn(string text, CatalogReadOptions? options = null) =>
        CatalogReader.ReadAll(FdsnText.ReadEvents(Utf8(text), options ?? Options()));
}
