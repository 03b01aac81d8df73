using System.CommandLine;
using System.Globalization;
using System.Text;

namespace Forecast.Cli;

/// <summary><c>forecast bench-ingest</c>: posts synthetic batches to a running API and reports events per second.</summary>
/// <remarks>The timing covers the whole request: upload, JSON parsing, validation, COPY and upsert, commit.</remarks>
static class BenchCommand
{
    public static Command Create()
    {
        var url = BenchShared.UrlOption();
        var key = BenchShared.KeyOption();
        var sizes = new Option<string>("--sizes") { Description = "batch sizes", DefaultValueFactory = _ => "1000,10000,100000" };
        var repeat = new Option<int>("--repeat") { Description = "batches per size", DefaultValueFactory = _ => 5 };
        var continuous = new Option<bool>("--continuous")
        {
            Description = "post batches of the sizes in turn until stopped, a line per batch (its new and re-posted " +
                "times) as each ends, instead of medians of --repeat",
        };
        var command = new Command("bench-ingest", "Post synthetic event batches to a running API and report events/s")
        {
            url, key, sizes, repeat, continuous,
        };
        command.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            using var http = BenchShared.Client(parse.GetValue(url)!, parse.GetValue(key)!, TimeSpan.FromMinutes(5));
            var run = DateTime.UtcNow.Ticks.ToString(CultureInfo.InvariantCulture);
            Console.WriteLine("batch_size  new_median_s  new_events_per_s  repost_median_s  repost_events_per_s");
            var sizeList = parse.GetValue(sizes)!.Split(',').Select(s => int.Parse(s, CultureInfo.InvariantCulture)).ToList();
            if (parse.GetValue(continuous))
            {
                // One process for the whole run, so a load test does not pay a process start and its compilation
                // per batch; stopped by a signal (Ctrl-C, SIGTERM), which ends the current batch's request.
                for (var r = 0; !ct.IsCancellationRequested; r++)
                {
                    foreach (var size in sizeList)
                    {
                        var body = Batch($"b{run}-{size}-{r}", size);
                        var fresh = await TimePost(http, body, ct);
                        var repost = await TimePost(http, body, ct);
                        PrintLine(size, fresh, repost);
                    }
                }
                return 0;
            }
            foreach (var size in sizeList)
            {
                var fresh = new List<double>();
                var repost = new List<double>();
                for (var r = 0; r < parse.GetValue(repeat); r++)
                {
                    var body = Batch($"b{run}-{size}-{r}", size);
                    fresh.Add(await TimePost(http, body, ct));
                    repost.Add(await TimePost(http, body, ct)); // identical: the idempotent path
                }
                PrintLine(size, BenchShared.Median(fresh), BenchShared.Median(repost));
            }
            return 0;
        }));
        return command;
    }

    static void PrintLine(int size, double freshSeconds, double repostSeconds) =>
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{size,10}  {freshSeconds,12:F3}  {size / freshSeconds,16:F0}  {repostSeconds,15:F3}  {size / repostSeconds,19:F0}"));

    static async Task<double> TimePost(HttpClient http, byte[] body, CancellationToken ct)
    {
        using var content = new ByteArrayContent(body);
        return await BenchShared.TimePostAsync(http, content, "application/json", ct);
    }

    static byte[] Batch(string prefix, int size)
    {
        var random = new Random(size);
        var start = new DateTime(2025, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        var sb = new StringBuilder(size * 200).Append('[');
        for (var i = 0; i < size; i++)
        {
            if (i > 0) sb.Append(',');
            sb.Append(CultureInfo.InvariantCulture,
                $"{{\"id\":\"{prefix}-{i}\",\"source\":\"bench\",\"time\":\"{start.AddSeconds(i * 7.3):O}\",")
              .Append(CultureInfo.InvariantCulture,
                $"\"latitude\":{random.NextDouble() * 2 - 1:F4},\"longitude\":{random.NextDouble() * 2 - 1:F4},")
              .Append(CultureInfo.InvariantCulture,
                $"\"depthKm\":{random.NextDouble() * 20:F2},\"magnitude\":{1 + random.Next(40) / 10.0:F1},\"magnitudeType\":\"ML\"}}");
        }
        return Encoding.UTF8.GetBytes(sb.Append(']').ToString());
    }

}
