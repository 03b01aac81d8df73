using System.Text;
using BenchmarkDotNet.Attributes;
using Forecast.Formats;

namespace Forecast.Benchmarks;

/// <summary>
/// Streaming parse of QuakeML 1.2 and FDSN event text documents of invented events, read event by event as the
/// ingest does (each event checked into an <see cref="EventRecord"/>, none kept). Goals (issue 5): at least
/// 20,000 events/s, i.e. 100,000 events within 5 s, and allocated memory per event independent of the number of
/// events (the "Allocated" column divided by Events stays flat across the Params).
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
public class FormatBenchmarks
{
    byte[] quakeMl = [];
    byte[] fdsnText = [];

    [Params(10_000, 100_000)]
    public int Events { get; set; }

    static readonly CatalogReadOptions Options = new()
    {
        NowUtc = new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc),
        MaxCharacters = 1L << 31,
    };

    [GlobalSetup]
    public void Setup()
    {
        var events = Enumerable.Range(0, Events).Select(i => new EventRecord("zz", $"smi:zz/event/{i}",
            new DateTime(2026, 1, 1, 0, 0, 0, DateTimeKind.Utc).AddSeconds(i * 7.3), 10 + i % 1000 * 0.001,
            -20 - i % 700 * 0.001, 5 + i % 300 * 0.01, 1 + i % 40 * 0.1, "ML", i % 3 == 0 ? "reviewed" : "automatic"));
        using (var buffer = new MemoryStream())
        {
            QuakeMlWriter.Write(buffer, events);
            quakeMl = buffer.ToArray();
        }
        var text = new StringWriter();
        FdsnText.Write(text, events);
        fdsnText = Encoding.UTF8.GetBytes(text.ToString());
    }

    [Benchmark]
    public int QuakeMlParse() => Count(QuakeMl.ReadEvents(new MemoryStream(quakeMl, false), Options));

    [Benchmark]
    public int FdsnTextParse() => Count(FdsnText.ReadEvents(new MemoryStream(fdsnText, false), Options));

    static int Count(IEnumerable<EventItem> items)
    {
        var n = 0;
        foreach (var item in items)
        {
            if (item.Event is null) throw new InvalidOperationException("A generated event did not parse.");
            n++;
        }
        return n;
    }
}
