using System.Globalization;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Http;
using Microsoft.Extensions.Logging;

namespace Forecast.Cli.Tests;

/// <summary><c>forecast bench-poll</c> against a small Kestrel server of the test's own, so what the server did is
/// known exactly.</summary>
public sealed class BenchPollCommandTests : IAsyncLifetime
{
    WebApplication? _app;
    string _url = "";
    long _firstTick;
    int _requests;

    /// <summary>From this many seconds after the first request (the 1 s warm-up, then 0.4 s into the run), for
    /// <see cref="StallSeconds"/>, every answer waits until the stall ends: a pause of the whole service, as a long
    /// garbage collection would make.</summary>
    const double StallFrom = 1.4, StallSeconds = 0.3;

    public async Task InitializeAsync()
    {
        var builder = WebApplication.CreateSlimBuilder();
        builder.WebHost.UseKestrel().UseUrls("http://127.0.0.1:0");
        builder.Logging.ClearProviders();
        _app = builder.Build();
        _app.Use(async (context, next) =>
        {
            Interlocked.CompareExchange(ref _firstTick, System.Diagnostics.Stopwatch.GetTimestamp(), 0);
            Interlocked.Increment(ref _requests);
            await next(context);
        });
        _app.MapGet("/ok", () => "ok");
        _app.MapGet("/fail", () => Results.StatusCode(500));
        _app.MapGet("/stall", async () =>
        {
            var since = System.Diagnostics.Stopwatch.GetElapsedTime(Interlocked.Read(ref _firstTick)).TotalSeconds;
            if (since >= StallFrom && since < StallFrom + StallSeconds)
                await Task.Delay(TimeSpan.FromSeconds(StallFrom + StallSeconds - since));
            return "ok";
        });
        await _app.StartAsync();
        _url = _app.Urls.First();
    }

    public async Task DisposeAsync()
    {
        if (_app is not null) await _app.DisposeAsync();
    }

    static double Field(string line, string name) =>
        double.Parse(Regex.Match(line, $@"{Regex.Escape(name)} ([0-9.]+) ms").Groups[1].Value, CultureInfo.InvariantCulture);

    [Fact]
    public void EveryScheduledRequestIsSentAndAnswered()
    {
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "ok=/ok@200", "--duration", "1",
            "--warmup", "0");
        Assert.True(run.ExitCode == 0, run.Stdout + run.Stderr);
        Assert.Contains("(200 ok of 200 sent, 0 failed)", run.Stdout);
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
        Assert.True(Field(line, "p90") > 100, line);
        Assert.True(Field(line, "max") is > 250 and < 1000, line);
        Assert.True(Field(line, "p50") < 100, line);
    }

    [Fact]
    public void AnAnswerOtherThan200IsAFailure()
    {
        var run = CliRunner.Forecast("bench-poll", "--url", _url, "--target", "ok=/ok@50", "--target", "bad=/fail@20",
            "--duration", "1", "--warmup", "0");
        Assert.Equal(1, run.ExitCode);
        Assert.Contains("(0 ok of 20 sent, 20 failed)", run.Stdout);
        Assert.Contains("bad      first failure: 500 from /fail", run.Stdout);
        Assert.Contains("(50 ok of 50 sent, 0 failed)", run.Stdout);
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
