using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;
using Forecast.Core.Simulation;

namespace Forecast.Cli;

/// <summary><c>forecast bench-refit</c>: posts a synthetic sequence at a steady rate while polling the latest
/// forecast, and reports how long each accepted event took to appear in a forecast.</summary>
/// <remarks>An event counts as included when a polled forecast's input snapshot has a last event time at or after
/// the event's origin time (events are posted in time order). The delay runs from the POST's acknowledgement to
/// the poll that first saw such a forecast, so it includes the poll interval.</remarks>
static class BenchRefitCommand
{
    public static Command Create()
    {
        var url = new Option<string>("--url") { DefaultValueFactory = _ => "http://127.0.0.1:5080", Description = "API base address" };
        var key = new Option<string>("--key") { Required = true, Description = "an admin or analyst key (posts events and declares the sequence)" };
        var rate = new Option<double>("--rate") { DefaultValueFactory = _ => 50, Description = "events per second" };
        var count = new Option<int>("--count") { DefaultValueFactory = _ => 1500, Description = "aftershocks to post" };
        var pollMs = new Option<int>("--poll-ms") { DefaultValueFactory = _ => 100, Description = "poll interval of the latest forecast" };
        var seed = new Option<int>("--seed") { DefaultValueFactory = _ => 7 };
        var command = new Command("bench-refit", "Measure the delay from an accepted event to the forecast that includes it")
        {
            url, key, rate, count, pollMs, seed,
        };
        command.SetAction((parse, ct) => CliException.GuardAsync(() => Run(parse.GetValue(url)!, parse.GetValue(key)!,
            parse.GetValue(rate), parse.GetValue(count), parse.GetValue(pollMs), parse.GetValue(seed), ct)));
        return command;
    }

    static async Task<int> Run(string url, string key, double rate, int count, int pollMs, int seed, CancellationToken ct)
    {
        using var http = new HttpClient { BaseAddress = new Uri(url) };
        http.DefaultRequestHeaders.Authorization = new AuthenticationHeaderValue("Bearer", key);
        var run = DateTime.UtcNow.ToString("HHmmss", CultureInfo.InvariantCulture);

        // An invented sequence that ended a moment ago: mainshock two days back, aftershocks until now.
        var origin = DateTime.UtcNow.AddDays(-2);
        var spec = new SimulatedSequenceSpec(6.5, origin, K: 1, C: 0.05, P: 1.08, B: 1.0, Mc: 2.0, SDays: 0, TDays: 1.99)
        {
            ScatterKm = 4,
        };
        var integral = Forecast.Core.Omori.OmoriUtsu.Integral(0.05, 1.08, 0, 1.99);
        spec = spec with { K = count / integral };
        var events = new SequenceSimulator(seed).Simulate(spec);
        object Body(Core.CatalogEvent e) => new
        {
            id = $"rf{run}-{e.Id}", source = "bench", time = e.TimeUtc.ToString("O", CultureInfo.InvariantCulture),
            latitude = e.Latitude, longitude = e.Longitude, depthKm = e.DepthKm, magnitude = e.Magnitude,
            magnitudeType = "Mw", status = "automatic",
        };

        (await http.PostAsJsonAsync("/v1/events", Body(events[0]), ct)).EnsureSuccessStatusCode();
        var declare = await http.PostAsJsonAsync("/v1/sequences",
            new { mainshock = new { source = "bench", id = $"rf{run}-{events[0].Id}" } }, ct);
        if (declare.StatusCode is not (HttpStatusCode.Created or HttpStatusCode.Conflict))
            throw new CliException($"Declaring the sequence failed: {(int)declare.StatusCode}");
        var sequenceUrl = declare.Headers.Location?.OriginalString ?? throw new CliException("No sequence Location.");
        Console.WriteLine($"sequence {sequenceUrl}; posting {events.Count - 1} events at {rate}/s, polling every {pollMs} ms");

        var seen = new List<(long Tick, DateTime LastEvent)>();
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(ct);
        var poller = Poll(http, sequenceUrl + "/forecasts/latest", pollMs, seen, stop.Token);

        var acks = new List<(DateTime Origin, long Tick)>();
        var clock = Stopwatch.StartNew();
        for (var i = 1; i < events.Count; i++)
        {
            var due = TimeSpan.FromSeconds((i - 1) / rate);
            if (due > clock.Elapsed) await Task.Delay(due - clock.Elapsed, ct);
            (await http.PostAsJsonAsync("/v1/events", Body(events[i]), ct)).EnsureSuccessStatusCode();
            acks.Add((events[i].TimeUtc, Stopwatch.GetTimestamp()));
        }
        var last = acks[^1].Origin;
        var deadline = Stopwatch.StartNew();
        while (deadline.Elapsed < TimeSpan.FromSeconds(60))
        {
            lock (seen) if (seen.Count > 0 && seen[^1].LastEvent >= last.AddTicks(-10)) break;
            await Task.Delay(100, ct);
        }
        await stop.CancelAsync();
        try { await poller; } catch (OperationCanceledException) { }

        var delays = new List<double>();
        var missing = 0;
        foreach (var (eventTime, ackTick) in acks)
        {
            // Microsecond storage: compare with a tick of slack.
            var hit = seen.FirstOrDefault(s => s.Tick >= ackTick && s.LastEvent >= eventTime.AddTicks(-10));
            if (hit.Tick == 0) missing++;
            else delays.Add(Stopwatch.GetElapsedTime(ackTick, hit.Tick).TotalSeconds);
        }
        delays.Sort();
        double Q(double q) => delays.Count == 0 ? double.NaN : delays[Math.Min(delays.Count - 1, (int)Math.Ceiling(q * delays.Count) - 1)];
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"events {acks.Count}, forecasts seen {seen.Select(s => s.LastEvent).Distinct().Count()}, never included {missing}"));
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"delay from acknowledgement to forecast: median {Q(0.5):F2} s, p95 {Q(0.95):F2} s, max {Q(1):F2} s"));
        return missing == 0 ? 0 : 1;
    }

    static async Task Poll(HttpClient http, string url, int pollMs, List<(long, DateTime)> seen, CancellationToken ct)
    {
        string? etag = null;
        while (!ct.IsCancellationRequested)
        {
            using var request = new HttpRequestMessage(HttpMethod.Get, url);
            if (etag is not null) request.Headers.IfNoneMatch.Add(new EntityTagHeaderValue(etag));
            using var response = await http.SendAsync(request, ct);
            if (response.StatusCode == HttpStatusCode.OK)
            {
                etag = response.Headers.ETag?.Tag;
                var body = await response.Content.ReadFromJsonAsync<JsonElement>(ct);
                if (body.GetProperty("input").GetProperty("lastEventTime") is { ValueKind: JsonValueKind.String } t)
                    lock (seen) seen.Add((Stopwatch.GetTimestamp(), t.GetDateTime().ToUniversalTime()));
            }
            await Task.Delay(pollMs, ct);
        }
    }
}
