using System.Diagnostics;
using static Forecast.Formats.Tests.Documents;

namespace Forecast.Formats.Tests;

public class QuakeMlReaderTests
{
    [Fact]
    public void PreferredOriginAndMagnitudeAreChosenWhereverTheyAppear()
    {
        // QuakeML 1.2 BED, Event: preferredOriginID and preferredMagnitudeID name one of the event's origins and
        // magnitudes; the schema does not make them come first, so they are placed last here.
        var xml = QuakeMlDoc(Event("smi:zz/event/1",
            Origin("smi:zz/o/a", lat: "1.0") + Origin("smi:zz/o/b", lat: "2.0") +
            Magnitude("smi:zz/m/a", "2.0", "mb") + Magnitude("smi:zz/m/b", "4.5", "Mw") +
            "<preferredOriginID>smi:zz/o/b</preferredOriginID><preferredMagnitudeID>smi:zz/m/b</preferredMagnitudeID>"));
        var r = ReadQuakeMl(xml);
        Assert.True(r.IsValid);
        var e = Assert.Single(r.Events);
        Assert.Equal("smi:zz/event/1", e.Id);
        Assert.Equal(2.0, e.Latitude);
        Assert.Equal(4.5, e.Magnitude);
        Assert.Equal("Mw", e.MagnitudeType);
    }

    [Fact]
    public void WithoutPreferredIdsTheFirstOriginAndMagnitudeAreUsed()
    {
        var xml = QuakeMlDoc(Event("smi:zz/event/2",
            Origin("smi:zz/o/a", lat: "1.0") + Origin("smi:zz/o/b", lat: "2.0") +
            Magnitude("smi:zz/m/a", "2.0", "mb") + Magnitude("smi:zz/m/b", "4.5", "Mw")));
        var e = Assert.Single(ReadQuakeMl(xml).Events);
        Assert.Equal(1.0, e.Latitude);
        Assert.Equal(2.0, e.Magnitude);
    }

    [Fact]
    public void TimeIsUtcToTheMicrosecondAndDepthInMetresBecomesKilometres()
    {
        // QuakeML 1.2 BED, Origin: depth is a RealQuantity in metres; times are xs:dateTime in UTC.
        var xml = QuakeMlDoc(Event("smi:zz/event/3",
            Origin("o", time: "2026-01-10T03:00:00.1234567Z", depthM: "12345.6") + Magnitude("m")));
        var e = Assert.Single(ReadQuakeMl(xml).Events);
        Assert.Equal(new DateTime(2026, 1, 10, 3, 0, 0, DateTimeKind.Utc).AddTicks(1_234_560), e.TimeUtc);
        Assert.Equal(DateTimeKind.Utc, e.TimeUtc.Kind);
        Assert.Equal(12.3456, e.DepthKm);
    }

    [Fact]
    public void ATimeWithoutZoneIsUtcAndAnOffsetIsConverted()
    {
        var a = Assert.Single(ReadQuakeMl(QuakeMlDoc(Event("a", Origin("o", time: "2026-01-10T03:00:00") + Magnitude("m"))))
            .Events);
        var b = Assert.Single(ReadQuakeMl(QuakeMlDoc(Event("b", Origin("o", time: "2026-01-10T05:00:00+02:00") +
            Magnitude("m")))).Events);
        Assert.Equal(a.TimeUtc, b.TimeUtc);
    }

    [Fact]
    public void MissingDepthAndMagnitudeTypeTakeTheDocumentedDefaults()
    {
        // QuakeML 1.2 BED: Origin.depth and Magnitude.type are optional (minOccurs 0).
        var e = Assert.Single(ReadQuakeMl(QuakeMlDoc(Event("d", Origin("o", depthM: null) + Magnitude("m", type: null))))
            .Events);
        Assert.Equal(0, e.DepthKm);
        Assert.Equal("M", e.MagnitudeType);
    }

    [Theory]
    [InlineData("automatic", null, "", "automatic")]
    [InlineData("automatic", "preliminary", "", "automatic")]
    [InlineData("manual", null, "", "reviewed")]
    [InlineData("automatic", "reviewed", "", "reviewed")]
    [InlineData("manual", "final", "", "reviewed")]
    [InlineData("manual", "reviewed", "<type>not existing</type>", "deleted")]
    public void StatusComesFromTheOriginsEvaluationAndTheEventType(string mode, string? status, string type,
        string expected)
    {
        // QuakeML 1.2 BED: EvaluationMode {manual, automatic}; EvaluationStatus {preliminary, confirmed, reviewed,
        // final, rejected}; EventType "not existing" marks an event that is retracted.
        var e = Assert.Single(ReadQuakeMl(QuakeMlDoc(Event("s", type + Origin("o", mode: mode, status: status) +
            Magnitude("m")))).Events);
        Assert.Equal(expected, e.Status);
    }

    [Fact]
    public void SourceIsTheEventAgencyThenTheOriginAgencyAndTheOptionOverridesBoth()
    {
        // QuakeML 1.2 BED: CreationInfo.agencyID.
        var withOriginAgency = Event("x", Origin("o", extra: "<creationInfo><agencyID>yy</agencyID></creationInfo>")
            + Magnitude("m")).Replace("<creationInfo><agencyID>zz</agencyID></creationInfo>", "");
        Assert.Equal("zz", Assert.Single(ReadQuakeMl(QuakeMlDoc(SimpleEvent("a"))).Events).Source);
        Assert.Equal("yy", Assert.Single(ReadQuakeMl(QuakeMlDoc(withOriginAgency)).Events).Source);
        Assert.Equal("ww", Assert.Single(ReadQuakeMl(QuakeMlDoc(SimpleEvent("a")), Options("ww")).Events).Source);
    }

    [Fact]
    public void AnEventWithoutAnySourceIsRefusedNamingTheField()
    {
        var xml = QuakeMlDoc(SimpleEvent("a").Replace("<creationInfo><agencyID>zz</agencyID></creationInfo>", ""));
        var r = ReadQuakeMl(xml);
        Assert.False(r.IsValid);
        Assert.Equal("[0].creationInfo.agencyID", Assert.Single(r.Errors).Key);
    }

    [Fact]
    public void BadFieldsAreReportedWithEventIndexLineAndPosition()
    {
        var xml = QuakeMlDoc(SimpleEvent("good"), SimpleEvent("bad", mag: "eleven", lat: "95"));
        var r = ReadQuakeMl(xml);
        Assert.False(r.IsValid);
        Assert.Equal(1, r.BadItems);
        var lat = r.Errors.Single(e => e.Key == "[1].origin.latitude");
        var mag = r.Errors.Single(e => e.Key == "[1].magnitude.mag");
        var lines = xml.Split('\n');
        Assert.Contains("<value>95</value>", lines[lat.Line - 1], StringComparison.Ordinal);
        Assert.Contains("<value>eleven</value>", lines[mag.Line - 1], StringComparison.Ordinal);
        // IXmlLineInfo positions are 1-based and point at the element's name, just after '<'.
        Assert.Equal('<', lines[mag.Line - 1][(int)mag.Position - 2]);
        Assert.Contains("line", mag.Text, StringComparison.Ordinal);
    }

    [Fact]
    public void APreferredIdNamingNoOriginIsAnError()
    {
        var xml = QuakeMlDoc(Event("p", "<preferredOriginID>nope</preferredOriginID>" + Origin("o") + Magnitude("m")));
        Assert.Equal("[0].preferredOriginID", Assert.Single(ReadQuakeMl(xml).Errors).Key);
    }

    [Fact]
    public void ElementsOfOtherNamespacesAndUnusedBedElementsAreSkipped()
    {
        // QuakeML 1.2 allows elements of other namespaces as extensions; a reader must not confuse them with BED.
        var xml = QuakeMlDoc(Event("n", """
              <ext:depth xmlns:ext="urn:test:ext"><value>999999</value></ext:depth>
              <description><text>Invented region</text></description>
              <pick publicID="p"><time><value>2026-01-10T03:00:01Z</value></time></pick>
            """ + Origin("o") + Magnitude("m")));
        var e = Assert.Single(ReadQuakeMl(xml).Events);
        Assert.Equal(8.0, e.DepthKm);
    }

    [Fact]
    public void ADocumentThatIsNotQuakeMl12IsRefusedAtTheRoot()
    {
        var r = ReadQuakeMl("<quakeml xmlns=\"http://quakeml.org/xmlns/quakeml/1.1\"/>");
        Assert.NotNull(r.Fatal);
        Assert.Contains("QuakeML 1.2", r.Fatal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void MalformedXmlIsRefusedWithLineAndPosition()
    {
        var r = ReadQuakeMl(QuakeMlDoc(SimpleEvent("a")).Replace("</latitude>", "</latitud>"));
        Assert.NotNull(r.Fatal);
        Assert.True(r.Fatal.Line > 3);
        Assert.True(r.Fatal.Position > 0);
    }

    [Fact]
    public void AnExternalEntityIsRefusedBecauseNoDtdIsProcessed()
    {
        // XXE: W3C XML 1.0, section 4.2.2 external entities; prohibited by DtdProcessing.Prohibit.
        var xml = """
            <?xml version="1.0"?>
            <!DOCTYPE q [<!ENTITY secret SYSTEM "file:///etc/passwd">]>
            <q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2">&secret;</q:quakeml>
            """;
        var r = ReadQuakeMl(xml);
        Assert.NotNull(r.Fatal);
        Assert.Contains("DTD", r.Fatal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void EntityExpansionIsRefusedAtOnce()
    {
        // "Billion laughs": nested internal entities (W3C XML 1.0, section 4.2.1) expanding to gigabytes.
        var entities = string.Join("\n", Enumerable.Range(1, 9).Select(i =>
            $"<!ENTITY lol{i} \"{string.Concat(Enumerable.Repeat($"&lol{i - 1};", 10))}\">"));
        var xml = $"""
            <?xml version="1.0"?>
            <!DOCTYPE q [<!ENTITY lol0 "lol">
            {entities}]>
            <q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2">&lol9;</q:quakeml>
            """;
        var watch = Stopwatch.StartNew();
        var r = ReadQuakeMl(xml);
        Assert.NotNull(r.Fatal);
        Assert.True(watch.Elapsed < TimeSpan.FromSeconds(1));
    }

    [Fact]
    public void DeepNestingIsRefused()
    {
        var deep = string.Concat(Enumerable.Repeat("<x>", 100_000)) + string.Concat(Enumerable.Repeat("</x>", 100_000));
        var r = ReadQuakeMl(QuakeMlDoc(Event("d", deep + Origin("o") + Magnitude("m"))));
        Assert.NotNull(r.Fatal);
        Assert.Contains("nested", r.Fatal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AHugeAttributeIsRefusedBeforeItIsBuffered()
    {
        var huge = new string('a', 8 * 1024 * 1024);
        var options = Options() with { MaxTokenBytes = 64 * 1024 };
        var watch = Stopwatch.StartNew();
        var r = ReadQuakeMl(QuakeMlDoc(Event(huge, Origin("o") + Magnitude("m"))), options);
        Assert.NotNull(r.Fatal);
        Assert.Contains("longer than 65536 bytes", r.Fatal.Message, StringComparison.Ordinal);
        Assert.True(r.Fatal.Line > 0);
        Assert.True(watch.Elapsed < TimeSpan.FromSeconds(2));
    }

    [Fact]
    public void AnEventOriginInTheFutureIsRefusedByTheSharedRules()
    {
        // EventRules.MaxFutureSkew: five minutes, the same limit the JSON ingest applies.
        var r = ReadQuakeMl(QuakeMlDoc(Event("f", Origin("o", time: "2026-06-01T00:06:00Z") + Magnitude("m"))));
        Assert.Equal("[0].origin.time", Assert.Single(r.Errors).Key);
    }

    [Fact]
    public void EventsAreYieldedOneAtATimeFromAnUnboundedStream()
    {
        // The reader must not need the document's end to hand out its first events (streaming, no DOM).
        using var endless = new GeneratedQuakeMl(int.MaxValue);
        var first = QuakeMl.ReadEvents(endless, Options()).Take(1000).ToList();
        Assert.Equal(1000, first.Count);
        Assert.All(first, i => Assert.NotNull(i.Event));
    }
}
