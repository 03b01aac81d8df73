using static Forecast.Formats.Tests.Documents;

namespace Forecast.Formats.Tests;

public class FdsnTextTests
{
    const string Line1 = "zz0001|2026-01-10T03:00:00.5|10.5|-20.25|8.2|auth|CAT|zz|zz0001|ML|3.1|auth|INVENTED REGION";

    [Fact]
    public void ReadsTheThirteenColumnLayout()
    {
        // FDSN web service specification v1.2, fdsnws-event format=text: '#' header, '|' separated columns
        // EventID|Time|Latitude|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|Magnitude|...
        var r = ReadFdsn(FdsnHeader + "\n" + Line1 + "\n");
        Assert.True(r.IsValid);
        var e = Assert.Single(r.Events);
        Assert.Equal(new EventRecord("zz", "zz0001", new DateTime(2026, 1, 10, 3, 0, 0, 500, DateTimeKind.Utc),
            10.5, -20.25, 8.2, 3.1, "ML", "automatic"), e);
    }

    [Fact]
    public void BytesThatAreNotUtf8RefuseTheDocumentInsteadOfBecomingReplacementCharacters()
    {
        // RFC 3629, 3: 0xC3 must be followed by a continuation byte (0x80-0xBF); 0x28 is not one.
        var bytes = System.Text.Encoding.ASCII.GetBytes(FdsnHeader + "\n" + Line1 + "\nzz0").Concat(new byte[] { 0xC3, 0x28 })
            .Concat(System.Text.Encoding.ASCII.GetBytes("2" + Line1[6..] + "\n")).ToArray();
        var r = CatalogReader.ReadAll(FdsnText.ReadEvents(new MemoryStream(bytes), Options()));
        Assert.False(r.IsValid);
        Assert.NotNull(r.Fatal);
        Assert.Contains("not valid UTF-8", r.Fatal!.Message, StringComparison.Ordinal);
        Assert.DoesNotContain(r.Events, e => e.Id.Contains('\uFFFD'));
    }

    [Fact]
    public void ToleratesAFourteenthEventTypeColumnAndReadsNotExistingAsDeleted()
    {
        var r = ReadFdsn(FdsnHeader + "|EventType\n" + Line1 + "|earthquake\n" +
            Line1.Replace("zz0001", "zz0002", StringComparison.Ordinal) + "|not existing\n");
        Assert.Equal(["automatic", "deleted"], r.Events.Select(e => e.Status));
    }

    [Fact]
    public void ToleratesSpacesInTheHeaderCommentsBlankLinesAndCrLf()
    {
        var header = "# EventID | Time | Latitude | Longitude | Depth/km | Author | Catalog | Contributor | " +
            "ContributorID | MagType | Magnitude | MagAuthor | EventLocationName";
        var r = ReadFdsn(header + "\r\n\r\n# a comment\r\n" + Line1 + "\r\n");
        Assert.True(r.IsValid);
    }

    [Fact]
    public void EmptyOptionalFieldsTakeTheDocumentedDefaults()
    {
        var r = ReadFdsn(FdsnHeader + "\nzz9|2026-01-10T03:00:00Z|1|2||||zz|||3.0||\n");
        var e = Assert.Single(r.Events);
        Assert.Equal(0, e.DepthKm);
        Assert.Equal("M", e.MagnitudeType);
        Assert.Equal("zz", e.Source);
    }

    [Fact]
    public void SourceIsContributorThenCatalogAndTheOptionOverridesBoth()
    {
        var catalogOnly = "zz9|2026-01-10T03:00:00Z|1|2||a|CAT|||ML|3.0||";
        Assert.Equal("CAT", Assert.Single(ReadFdsn(FdsnHeader + "\n" + catalogOnly).Events).Source);
        Assert.Equal("ww", Assert.Single(ReadFdsn(FdsnHeader + "\n" + Line1, Options("ww")).Events).Source);
        var none = ReadFdsn(FdsnHeader + "\nzz9|2026-01-10T03:00:00Z|1|2||a||||ML|3.0||");
        Assert.Equal("[0].Contributor", Assert.Single(none.Errors).Key);
    }

    [Theory]
    [InlineData("zz1|2026-01-10T03:00:00|10|20|5|a|c|zz|zz1|ML|3.0|a|X|extra", "[0]", "has 14 fields")]
    [InlineData("zz1|2026-01-10T03:00:00|10|20|5|a|c|zz|zz1|ML|3.0", "[0]", "has 11 fields")]
    [InlineData("zz1|2026-01-10T03:00:00|ten|20|5|a|c|zz|zz1|ML|3.0|a|X", "[0].Latitude", "must be a number")]
    [InlineData("zz1|2026-01-10T03:00:00|10|20|5|a|c|zz|zz1|ML|3,0|a|X", "[0].Magnitude", "must be a number")]
    [InlineData("zz1|2026-01-10T03:00:00|10|200|5|a|c|zz|zz1|ML|3.0|a|X", "[0].Longitude", "between -180 and 180")]
    [InlineData("zz1|10/01/2026 03:00|10|20|5|a|c|zz|zz1|ML|3.0|a|X", "[0].Time", "ISO 8601")]
    [InlineData("|2026-01-10T03:00:00|10|20|5|a|c|zz|zz1|ML|3.0|a|X", "[0].EventID", "is required")]
    [InlineData("zz1|2026-01-10T03:00:00|10|20|5|a|c|zz|zz1|ML||a|X", "[0].Magnitude", "is required")]
    public void BrokenLinesAreRefusedNamingLineAndField(string line, string key, string message)
    {
        // FDSN text has no quoting, so a wrong field count cannot be repaired; required fields per the brief:
        // EventID, Time, Latitude, Longitude, Magnitude.
        var r = ReadFdsn(FdsnHeader + "\n# comment\n" + line + "\n");
        Assert.False(r.IsValid);
        var error = Assert.Single(r.Errors);
        Assert.Equal(key, error.Key);
        Assert.Contains(message, error.Message, StringComparison.Ordinal);
        Assert.Equal(3, error.Line);
        Assert.EndsWith("(line 3)", error.Text, StringComparison.Ordinal);
    }

    [Fact]
    public void EveryBadLineIsReportedNotOnlyTheFirst()
    {
        var r = ReadFdsn(FdsnHeader + "\n" + Line1 + "\nbad\n" + Line1.Replace("10.5", "x", StringComparison.Ordinal));
        Assert.Equal(2, r.BadItems);
        Assert.Equal([3L, 4L], r.Errors.Select(e => e.Line));
    }

    [Theory]
    [InlineData("zz1|2026-01-10T03:00:00|10|20|5|a|c|zz|zz1|ML|3.0|a|X", "header")]
    [InlineData("#EventID|Time|Latitude", "3 columns")]
    [InlineData("#EventID|Time|Lat|Longitude|Depth/km|Author|Catalog|Contributor|ContributorID|MagType|Magnitude|MagAuthor|EventLocationName", "'Latitude'")]
    [InlineData("", "empty")]
    public void AMissingOrWrongHeaderRefusesTheDocument(string firstLine, string message)
    {
        var r = ReadFdsn(firstLine + "\n");
        Assert.NotNull(r.Fatal);
        Assert.Contains(message, r.Fatal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AnOverlongLineIsRefusedBeforeItIsBuffered()
    {
        var r = ReadFdsn(FdsnHeader + "\n" + new string('x', 200_000), Options() with { MaxTokenBytes = 4096 });
        Assert.NotNull(r.Fatal);
        Assert.Contains("longer than 4096 bytes", r.Fatal.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void WrittenEventsReadBackIdentically()
    {
        EventRecord[] events =
        [
            new("zz", "zz0001", new DateTime(2026, 1, 10, 3, 0, 0, DateTimeKind.Utc).AddTicks(1_234_560), 0.1 + 0.2,
                -179.999999999, 1.0 / 3, 3.14159, "ML", "automatic"),
            new("ab-1", "smi:ab/event/2", new DateTime(2025, 12, 31, 23, 59, 59, DateTimeKind.Utc), -90, 180, -10,
                -2, "Mw(mB)", "deleted"),
        ];
        var text = new StringWriter();
        FdsnText.Write(text, events);
        Assert.StartsWith(FdsnHeader + "|EventType\n", text.ToString(), StringComparison.Ordinal);
        var back = ReadFdsn(text.ToString());
        Assert.Equal(events, back.Events);
    }

    [Fact]
    public void AnIdWithTheSeparatorCannotBeWritten()
    {
        var e = new EventRecord("zz", "a|b", Now, 0, 0, 0, 1, "ML", "automatic");
        Assert.NotNull(FdsnText.CannotWrite(e));
        Assert.Throws<ArgumentException>(() => FdsnText.Write(new StringWriter(), [e]));
    }
}
