using System.CommandLine;
using System.Globalization;
using System.Text;
using Forecast.Formats;

namespace Forecast.Cli;

/// <summary><c>forecast bench-upload</c>: posts whole QuakeML and FDSN text documents to a running API and reports
/// events per second and, given the server's process id, the server's peak resident memory during each upload.
/// </summary>
/// <remarks>Peak memory is the kernel's high-water mark of the server process (VmHWM in /proc/PID/status), reset
/// before every upload by writing 5 to /proc/PID/clear_refs (Linux 4.0 and later; needs the same user or root).
/// The timing covers the whole request: upload, buffering, parsing, validation, COPY, upsert and commit.</remarks>
static class BenchUploadCommand
{
    public static Command Create()
    {
        var url = BenchShared.UrlOption();
        var key = BenchShared.KeyOption();
        var sizes = new Option<string>("--sizes") { Description = "events per document", DefaultValueFactory = _ => "10000,50000,100000" };
        var formats = new Option<string>("--formats") { Description = "quakeml, fdsn or both", DefaultValueFactory = _ => "quakeml,fdsn" };
        var repeat = new Option<int>("--repeat") { Description = "uploads per size and format", DefaultValueFactory = _ => 3 };
        var serverPid = new Option<int?>("--server-pid") { Description = "the API's process id, to read its peak memory" };
        var command = new Command("bench-upload",
            "Post synthetic QuakeML and FDSN text documents to a running API; report events/s and server peak memory")
        {
            url, key, sizes, formats, repeat, serverPid,
        };
        command.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            using var http = BenchShared.Client(parse.GetValue(url)!, parse.GetValue(key)!, TimeSpan.FromMinutes(10));
            var pid = parse.GetValue(serverPid);
            var run = DateTime.UtcNow.Ticks.ToString(CultureInfo.InvariantCulture);
            var dir = Directory.CreateTempSubdirectory("forecast-upload-");
            try
            {
                Console.WriteLine("format   events     MB  median_s  events_per_s  server_rss_before_MB  server_peak_MB");
                foreach (var format in parse.GetValue(formats)!.Split(','))
                {
                    if (format is not ("quakeml" or "fdsn")) throw new CliException($"unknown format '{format}'");
                    foreach (var size in parse.GetValue(sizes)!.Split(',').Select(s => int.Parse(s, CultureInfo.InvariantCulture)))
                    {
                        var seconds = new List<double>();
                        double before = 0, peak = 0;
                        long bytes = 0;
                        for (var r = 0; r < parse.GetValue(repeat); r++)
                        {
                            var file = Path.Combine(dir.FullName, $"{format}-{size}-{r}");
                            bytes = Write(file, format, $"u{run}-{format}-{size}-{r}", size);
                            if (pid is { } p) before = Math.Max(before, ResetPeak(p));
                            seconds.Add(await TimePost(http, file, format, ct));
                            if (pid is { } q) peak = Math.Max(peak, Memory(q, "VmHWM"));
                            File.Delete(file);
                        }
                        var m = BenchShared.Median(seconds);
                        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                            $"{format,-7} {size,7} {bytes / 1e6,6:F1}  {m,8:F3}  {size / m,12:F0}  {(pid is null ? "-" : before.ToString("F0", CultureInfo.InvariantCulture)),20}  {(pid is null ? "-" : peak.ToString("F0", CultureInfo.InvariantCulture)),14}"));
                    }
                }
            }
            finally
            {
                dir.Delete(recursive: true);
            }
            return 0;
        }));
        return command;
    }

    static long Write(string path, string format, string prefix, int size)
    {
        var random = new Random(size);
        var start = new DateTime(2025, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        IEnumerable<EventRecord> Events()
        {
            for (var i = 0; i < size; i++)
            {
                yield return new EventRecord("bench", $"{prefix}-{i}", start.AddSeconds(i * 7.3),
                    Math.Round(random.NextDouble() * 2 - 1, 4), Math.Round(random.NextDouble() * 2 - 1, 4),
                    Math.Round(random.NextDouble() * 20, 2), 1 + random.Next(40) / 10.0, "ML", "automatic");
            }
        }
        using (var stream = File.Create(path))
        {
            if (format == "quakeml")
            {
                QuakeMlWriter.Write(stream, Events());
            }
            else
            {
                using var writer = new StreamWriter(stream, new UTF8Encoding(false));
                FdsnText.Write(writer, Events());
            }
        }
        return new FileInfo(path).Length;
    }

    static async Task<double> TimePost(HttpClient http, string file, string format, CancellationToken ct)
    {
        await using var body = File.OpenRead(file);
        using var content = new StreamContent(body, 1 << 16);
        return await BenchShared.TimePostAsync(http, content,
            format == "quakeml" ? FormatNames.QuakeMl : FormatNames.FdsnText, ct);
    }

    /// <summary>Resets the process's resident-memory high-water mark; returns its resident memory now, in MB.</summary>
    static double ResetPeak(int pid)
    {
        try
        {
            File.WriteAllText($"/proc/{pid}/clear_refs", "5");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new CliException($"cannot reset the peak memory of process {pid}: {e.Message}");
        }
        return Memory(pid, "VmRSS");
    }

    static double Memory(int pid, string field)
    {
        var line = File.ReadLines($"/proc/{pid}/status").FirstOrDefault(l => l.StartsWith(field + ":", StringComparison.Ordinal))
            ?? throw new CliException($"process {pid} reports no {field}");
        return double.Parse(line[(field.Length + 1)..].Trim().Split(' ')[0], CultureInfo.InvariantCulture) / 1024;
    }

}
