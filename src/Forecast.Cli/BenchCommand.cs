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
        var command = new Command("bench-ingest", "Post synthetic event batches to a running API and report events/s")
        {
            url, key, sizes, repeat,
        };
        command.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            using var http = BenchShared.Client(parse.GetValue(url)!, parse.GetValue(key)!, TimeSpan.FromMinutes(5));
            var run = DateTime.UtcNow.Ticks.ToString(CultureInfo.InvariantCulture);
            Console.WriteLine("batch_size  new_median_s  new_events_per_s  repost_median_s  repost_events_per_s");
            foreach (var size in parse.GetValue(sizes)!.Split(',').Select(s => int.Parse(s, CultureInfo.InvariantCulture)))
            {
                var fresh = new List<double>();
                var repost = new List<double>();
                for (var r = 0; r < parse.GetValue(repeat); r++)
                {
                    var body = Batch($"b{run}-{size}-{r}", size);
                    fresh.Add(await TimePost(http, body, ct));
                    repost.Add(await TimePost(http, body, ct)); // identical: the idempotent path
                }
                double m1 = BenchShared.Median(fresh), m2 = BenchShared.Median(repost);
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"{size,10}  {m1,12:F3}  {size / m1,16:F0}  {m2,15:F3}  {size / m2,19:F0}"));
            }
            return 0;
        }));
        return command;
    }

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
