using System.Xml.Linq;
using static Forecast.Formats.Tests.Documents;

namespace Forecast.Formats.Tests;

public class QuakeMlWriterTests
{
    static readonly EventRecord[] Events =
    [
        new("zz", "smi:zz/event/1", new DateTime(2026, 1, 10, 3, 0, 0, DateTimeKind.Utc).AddTicks(1_234_560),
            0.1 + 0.2, -179.999999999, 1.0 / 3, 3.14159, "ML", "automatic"),
        new("ab-1", "ex-2", new DateTime(2025, 12, 31, 23, 59, 59, DateTimeKind.Utc), -90, 180, -10, -2, "Mw(mB)",
            "reviewed"),
        new("ab-1", "ex-3", new DateTime(2025, 12, 31, 23, 59, 59, DateTimeKind.Utc), 12.345678901234, 0, 799.999, 9.99,
            "mb", "deleted"),
    ];

    static string Write(IEnumerable<EventRecord> events)
    {
        using var buffer = new MemoryStream();
        QuakeMlWriter.Write(buffer, events);
        return System.Text.Encoding.UTF8.GetString(buffer.ToArray());
    }

    [Fact]
    public void WrittenEventsReadBackIdentically()
    {
        var back = ReadQuakeMl(Write(Events));
        Assert.True(back.IsValid);
        Assert.Equal(Events, back.Events);
    }

    [Fact]
    public void TheDocumentHasTheQuakeMl12BedStructure()
    {
        // QuakeML 1.2: root q:quakeml in http://quakeml.org/xmlns/quakeml/1.2, eventParameters and its events in
        // the BED namespace http://quakeml.org/xmlns/bed/1.2, each element with a publicID.
        var doc = XDocument.Parse(Write(Events));
        XNamespace q = QuakeMl.Namespace, bed = QuakeMl.BedNamespace;
        Assert.Equal(q + "quakeml", doc.Root!.Name);
        var ep = Assert.Single(doc.Root.Elements());
        Assert.Equal(bed + "eventParameters", ep.Name);
        Assert.NotNull(ep.Attribute("publicID"));
        var first = ep.Elements(bed + "event").First();
        Assert.Equal("smi:zz/event/1#origin", first.Element(bed + "preferredOriginID")!.Value);
        var origin = first.Element(bed + "origin")!;
        Assert.Equal("smi:zz/event/1#origin", origin.Attribute("publicID")!.Value);
        Assert.Equal("2026-01-10T03:00:00.123456Z", origin.Element(bed + "time")!.Element(bed + "value")!.Value);
        // BED: depth in metres. 1/3 km is written as the metres of its shortest round-trip decimal.
        Assert.Equal("333.3333333333333", origin.Element(bed + "depth")!.Element(bed + "value")!.Value);
        Assert.Equal("zz", first.Element(bed + "creationInfo")!.Element(bed + "agencyID")!.Value);
        var deleted = ep.Elements(bed + "event").Last();
        Assert.Equal("not existing", deleted.Element(bed + "type")!.Value);
    }

    [Fact]
    public void AHundredThousandGeneratedEventsStreamThroughTheReader()
    {
        using var doc = new GeneratedQuakeMl(100_000);
        var count = 0;
        foreach (var item in QuakeMl.ReadEvents(doc, Options() with { MaxCharacters = 1L << 30 }))
        {
            Assert.NotNull(item.Event);
            count++;
        }
        Assert.Equal(100_000, count);
    }
}
