using System.Globalization;
using System.Net;
using System.Net.Sockets;
using System.Text;
using System.Text.RegularExpressions;

namespace Forecast.Cli.Tests;

/// <summary><c>forecast bench-poll</c> against a small HTTP/1.1 server of the test's own (keep-alive, RFC 9112),
/// so what the server did is known exactly. (Not Kestrel: referencing ASP.NET Core here would leave the forecast
/// program beside the tests without assemblies it ships itself.)</summary>
public sealed class BenchPollCommandTests : IDisposable
{
    readonly TcpListener _listener = new(IPAddress.Loopback, 0);
    readonly CancellationTokenSource _stop = new();
    readonly string _url;
    long _stallTick;
    int _requests;

    /// <summary>From the arrival of request number <see cref="StallAtRequest"/> (past the 200 of a 1 s warm-up at
    /// 200/s, then 0.4 s into the run), for <see cref="StallSeconds"/>, every answer waits until the stall ends: a
    /// pause of the whole service, as a long garbage collection would make. Counting requests rather than seconds
    /// keeps the stall inside the run even when a loaded machine starts the run late.</summary>
    const int StallAtRequest = 281;
    const double StallSeconds = 0.3;

    public BenchPollCommandTests()
    {
        _listener.Start();
        _url = $"http://127.0.0.1:{((IPEndPoint)_listener.LocalEndpoint).Port}";
        _ = AcceptAsync();
    }

    async Task AcceptAsync()
    {
        while (!_stop.IsCancellationRequested)
        {
            TcpClient client;
            try { client = await _listener.AcceptTcpClientAsync(_stop.Token); }
            catch (Exception) { return; }
            _ = ServeAsync(client);
        }
    }

    /// <summary>Answers one connection's requests in turn: /ok with a chunked body, /fail with a 500 and an empty
    /// body, /stall with "ok" (after the stall while it is on); /hang is never answered.</summary>
    async Task ServeAsync(TcpClient client)
    {
        using var _ = client;
        var stream = client.GetStream();
        var buffer = new byte[8192];
        var filled = 0;
        try
        {
            while (true)
            {
                int end;
                while ((end = buffer.AsSpan(0, filled).IndexOf("\r\n\r\n"u8)) < 0)
                {
                    var n = await stream.ReadAsync(buffer.AsMemory(filled), _stop.Token);
                    if (n == 0) return;
                    filled += n;
                }
                var path = Encoding.ASCII.GetString(buffer, 0, end).Split(' ')[1];
                Buffer.BlockCopy(buffer, end + 4, buffer, 0, filled - end - 4);
                filled -= end + 4;

                if (Interlocked.Increment(ref _requests) == StallAtRequest)
                    Interlocked.Exchange(ref _stallTick, System.Diagnostics.Stopwatch.GetTimestamp());
                string answer;
                if (path == "/hang") await Task.Delay(Timeout.Infinite, _stop.Token);   // never answers
                if (path == "/fail") answer = "HTTP/1.1 500 Internal Server Error\r\nContent-Length: 0\r\n\r\n";
                else if (path == "/ok") answer = "HTTP/1.1 200 OK\r\nTransfer-Encoding: chunked\r\n\r\n1\r\no\r\n1\r\nk\r\n0\r\n\r\n";
                else
                {
                    var stalled = Interlocked.Read(ref _stallTick);
                    var since = stalled == 0 ? -1 : System.Diagnostics.Stopwatch.GetElapsedTime(stalled).TotalSeconds;
                    if (since >= 0 && since < StallSeconds)
                        await Task.Delay(TimeSpan.FromSeconds(StallSeconds - since));
                    answer = "HTTP/1.1 200 OK\r\nContent-Length: 2\r\n\r\nok";
                }
                await stream.WriteAsync(Encoding.ASCII.GetBytes(answer), _stop.Token);
            }
        }
        catch (Exception)
        {
            // the client went away, or the test ended
        }
    }

    public void Dispose()
    {
        _stop.Cancel();
        _listener.Stop();
        _stop.Dispose();
    }

    static double Field(string line, string name) =>
        double.Parse(Regex.Match(line, $@"{Regex.Escape(name)} ([0-9.]+) ms").Groups[1].Value, CultureInfo.InvariantCulture);

    [Fact]
    public void EveryScheduledRequestIsSentAndAnswered()
    {
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "ok=/ok@200", "--duration", "1",
            "--warmup", "0");
        Assert.True(run.ExitCode == 0, run.Stdout + run.Stderr);
        Assert.Contains("(200 ok of 200 sent, 0 failed, 0 unanswered)", run.Stdout);
        Assert.Equal(200, _requests);
    }

    [Fact]
    public void AStallCountsForEveryRequestScheduledDuringIt()
    {
        // At 200/s, 60 of the 200 requests are due within the 0.3 s stall and wait for its end: about 30 % of the
        // latencies exceed 0 ms by up to 300 ms. A client that waited for each answer before sending the next would
        // have sent only its few open requests into the stall and reported a clean p90.
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "stall=/stall@200", "--duration", "1",
            "--warmup", "1");
        Assert.True(run.ExitCode == 0, run.Stdout + run.Stderr);
        var line = run.Stdout.Split('\n').Single(l => l.StartsWith("stall", StringComparison.Ordinal) && l.Contains("p50"));
        // Requests due in the first half of the stall wait at least 150 ms: 15 % of them, so p90 is at least that.
        // Only lower bounds are asserted: a loaded machine can only make latencies longer.
        Assert.True(Field(line, "p90") >= 150, line);
        Assert.True(Field(line, "max") >= 250, line);
    }

    [Fact]
    public void RequestsDueWhileEveryConnectionIsBusyWaitAndAreAllAnswered()
    {
        // Two connections and the 0.3 s stall: requests falling due during it queue behind the two held ones, are
        // sent in turn when those are answered, and their wait counts in their latency, as in the test above.
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "stall=/stall@200", "--duration", "1",
            "--warmup", "1", "--connections", "2");
        Assert.True(run.ExitCode == 0, run.Stdout + run.Stderr);
        Assert.Contains("(200 ok of 200 sent, 0 failed, 0 unanswered)", run.Stdout);
        Assert.Equal(400, _requests);   // the warm-up's 200 and the run's 200, each sent once
        var line = run.Stdout.Split('\n').Single(l => l.StartsWith("stall", StringComparison.Ordinal) && l.Contains("p50"));
        Assert.True(Field(line, "p90") >= 150, line);
    }

    [Fact]
    public void RequestsStillUnansweredTenSecondsAfterTheRunAreCountedAndFail()
    {
        // 10 requests on 4 connections to a server that never answers: 4 are sent and wait, 6 wait for a
        // connection; after the run's 0.5 s and the 10 s allowed for answers, all 10 are unanswered.
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "hang=/hang@20", "--duration", "0.5",
            "--warmup", "0", "--connections", "4");
        Assert.Equal(1, run.ExitCode);
        Assert.Contains("(0 ok of 10 sent, 0 failed, 10 unanswered)", run.Stdout);
        Assert.Equal(4, _requests);
    }

    [Fact]
    public void AnAnswerOtherThan200IsAFailure()
    {
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "ok=/ok@50", "--target", "bad=/fail@20",
            "--duration", "1", "--warmup", "0");
        Assert.Equal(1, run.ExitCode);
        Assert.Contains("(0 ok of 20 sent, 20 failed, 0 unanswered)", run.Stdout);
        Assert.Contains("bad      first failure: 500 from /fail", run.Stdout);
        Assert.Contains("(50 ok of 50 sent, 0 failed, 0 unanswered)", run.Stdout);
    }

    [Theory]
    [InlineData("noequals")]
    [InlineData("a=nopath@10")]
    [InlineData("a=/x@0")]
    [InlineData("a=/x@fast")]
    public void ABadTargetIsRefused(string target)
    {
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", target, "--duration", "1");
        Assert.NotEqual(0, run.ExitCode);
        Assert.Contains("NAME=PATH@RATE", run.Stderr + run.Stdout);
        Assert.Equal(0, _requests);
    }

    [Fact]
    public void PercentilesAreNearestRank()
    {
        // Hyndman and Fan (1996), definition 1: the smallest value with at least q of the data at or below it.
        double[] sorted = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
        Assert.Equal(5, BenchPollCommand.Percentile(sorted, 0.50));
        Assert.Equal(9, BenchPollCommand.Percentile(sorted, 0.90));
        Assert.Equal(10, BenchPollCommand.Percentile(sorted, 0.99));
        Assert.Equal(1, BenchPollCommand.Percentile(sorted, 0.0));
        Assert.True(double.IsNaN(BenchPollCommand.Percentile([], 0.5)));
    }
}
