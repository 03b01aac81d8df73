using System.Text.Json;
using Forecast.Api.Events;

namespace Forecast.Api.Tests;

/// <summary>Validation of the JSON event format, field by field (limits: EventRules, common practice).</summary>
public class EventJsonTests
{
    static readonly DateTime Now = new(2026, 6, 1, 12, 0, 0, DateTimeKind.Utc);

    const string Good = """
        {"id": "e1", "source": "zz", "time": "2026-06-01T11:00:00Z", "latitude": 1.5, "longitude": -2.5,
         "depthKm": 10, "magnitude": 3.2, "magnitudeType": "ML", "status": "reviewed"}
        """;

    sealed record Result(List<Forecast.Storage.Events.EventInput> Events, Dictionary<string, string[]> Errors,
        int BadItems);

    static Result Read(string json)
    {
        var events = new List<Forecast.Storage.Events.EventInput>();
        var parsed = EventJson.Read(JsonDocument.Parse(json).RootElement, Now, events.Add);
        return new Result(events, parsed.Errors, parsed.BadItems);
    }

    static string With(string field, string valueJson)
    {
        var node = System.Text.Json.Nodes.JsonNode.Parse(Good)!.AsObject();
        node[field] = System.Text.Json.Nodes.JsonNode.Parse(valueJson);
        return node.ToJsonString();
    }

    [Fact]
    public void AWellFormedEventIsRead()
    {
        var parsed = Read(Good);
        Assert.Empty(parsed.Errors);
        var e = Assert.Single(parsed.Events);
        Assert.Equal(new DateTime(2026, 6, 1, 11, 0, 0, DateTimeKind.Utc), e.OriginTime);
        Assert.Equal(("zz", "e1", 3.2, "reviewed"), (e.Source, e.EventId, e.Magnitude, e.Status));
    }

    [Theory]
    [InlineData("id", "\"a\\uD800b\"")]      // an unpaired high surrogate (RFC 8259, 8.2)
    [InlineData("source", "\"\\uDC00\"")]    // an unpaired low surrogate
    public void AnUnpairedSurrogateEscapeIsABadFieldNotAFailure(string field, string valueJson)
    {
        var parsed = Read(Good.Replace($"\"{field}\": \"{(field == "id" ? "e1" : "zz")}\"", $"\"{field}\": {valueJson}"));
        Assert.Empty(parsed.Events);
        Assert.NotEmpty(parsed.Errors);
    }

    [Fact]
    public void GoodEventsAreHandedOnOnlyUntilTheFirstBadOne()
    {
        // The endpoint stages what it is handed; after a bad item the batch is refused, so nothing more is staged.
        var bad = With("latitude", "91");
        var events = new List<Forecast.Storage.Events.EventInput>();
        var parsed = EventJson.Read(JsonDocument.Parse($"[{Good}, {bad}, {Good}, {bad}]").RootElement, Now, events.Add);
        Assert.Single(events);
        Assert.Equal((4, 2, true), (parsed.Count, parsed.BadItems, parsed.IsArray));
        Assert.Equal(["[1].latitude", "[3].latitude"], parsed.Errors.Keys.Order());
    }

    [Theory]
    [InlineData("latitude", "90.01")]
    [InlineData("latitude", "-90.01")]
    [InlineData("longitude", "180.5")]
    [InlineData("depthKm", "-10.5")]
    [InlineData("depthKm", "801")]
    [InlineData("magnitude", "10.1")]
    [InlineData("magnitude", "-2.1")]
    [InlineData("magnitude", "\"3.2\"")]
    [InlineData("magnitude", "1e400")]
    [InlineData("latitude", "null")]
    [InlineData("latitude", "true")]
    [InlineData("time", "\"2026-06-01T11:00:00\"")]
    [InlineData("time", "\"2026-06-01\"")]
    [InlineData("time", "\"yesterday\"")]
    [InlineData("time", "\"2026-06-01T12:06:00Z\"")]
    [InlineData("time", "1717239600")]
    [InlineData("id", "\"\"")]
    [InlineData("id", "\"a b\"")]
    [InlineData("id", "\"a\\u0000b\"")]
    [InlineData("id", "\"../../etc/passwd\"")]
    [InlineData("id", "\"a\\\\b\"")]
    [InlineData("source", "\"z z\"")]
    [InlineData("source", "\"zz'; drop table event; --\"")]
    [InlineData("source", "\"abcdefghijklmnopqrstuvwxyz0123456789\"")]
    [InlineData("magnitudeType", "\"M L\"")]
    [InlineData("status", "\"final\"")]
    [InlineData("status", "7")]
    public void ABadFieldIsNamed(string field, string valueJson)
    {
        var parsed = Read(With(field, valueJson));
        Assert.Empty(parsed.Events);
        Assert.True(parsed.Errors.ContainsKey(field), $"{field} = {valueJson}: {string.Join("; ", parsed.Errors.Keys)}");
    }

    [Theory]
    [InlineData("id")]
    [InlineData("source")]
    [InlineData("time")]
    [InlineData("latitude")]
    [InlineData("longitude")]
    [InlineData("depthKm")]
    [InlineData("magnitude")]
    [InlineData("magnitudeType")]
    public void AMissingRequiredFieldIsNamed(string field)
    {
        var node = System.Text.Json.Nodes.JsonNode.Parse(Good)!.AsObject();
        node.Remove(field);
        var parsed = Read(node.ToJsonString());
        Assert.Equal(["is required"], parsed.Errors[field]);
    }

    [Fact]
    public void StatusDefaultsToAutomatic()
    {
        var node = System.Text.Json.Nodes.JsonNode.Parse(Good)!.AsObject();
        node.Remove("status");
        Assert.Equal("automatic", Read(node.ToJsonString()).Events.Single().Status);
    }

    [Fact]
    public void UnknownAndRepeatedFieldsAreRefused()
    {
        Assert.True(Read(With("colour", "\"red\"")).Errors.ContainsKey("colour"));
        var repeated = Good.Replace("\"depthKm\": 10", "\"depthKm\": 10, \"depthKm\": 12");
        Assert.True(Read(repeated).Errors.ContainsKey("depthKm"));
    }

    [Fact]
    public void EveryBadItemOfABatchIsListedByIndex()
    {
        var parsed = Read($"[{Good}, {With("latitude", "100")}, 42, {With("magnitude", "11")}]");
        Assert.Equal(3, parsed.BadItems);
        Assert.Equal(["[1].latitude", "[2]", "[3].magnitude"], parsed.Errors.Keys.Order().ToArray());
    }

    [Fact]
    public void AnEmptyArrayIsRefused()
    {
        Assert.NotEmpty(Read("[]").Errors);
    }

    [Theory]
    [InlineData("2026-06-01T11:00:00Z", "2026-06-01T11:00:00.0000000Z")]
    [InlineData("2026-06-01T13:30:00+02:30", "2026-06-01T11:00:00.0000000Z")]
    [InlineData("2026-06-01T11:00:00.1234567Z", "2026-06-01T11:00:00.1234560Z")]
    public void TimesAreConvertedToUtcAndTruncatedToMicroseconds(string text, string expected)
    {
        // PostgreSQL timestamptz keeps microseconds (PostgreSQL documentation, "Date/Time Types").
        Assert.Equal(expected, EventJson.ParseUtc(text)!.Value.ToString("O"));
    }
}
