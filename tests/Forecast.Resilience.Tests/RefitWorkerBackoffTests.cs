using Forecast.Api.Workers;

namespace Forecast.Resilience.Tests;

public class RefitWorkerBackoffTests
{
    [Theory]
    [InlineData(1, 500)]
    [InlineData(2, 1_000)]
    [InlineData(4, 4_000)]
    [InlineData(5, 5_000)]
    [InlineData(1_000, 5_000)]
    public void ThePauseDoublesFromThePollIntervalPerFailedRoundUpToTheMaximum(int failures, double expectedMs)
    {
        var o = new RefitWorkerOptions { PollInterval = TimeSpan.FromMilliseconds(250), MaxBackoff = TimeSpan.FromSeconds(5) };
        Assert.Equal(expectedMs, RefitWorker.Backoff(o, failures).TotalMilliseconds);
    }

    [Fact]
    public void AMaximumBelowThePollIntervalNeverShortensThePoll()
    {
        var o = new RefitWorkerOptions { PollInterval = TimeSpan.FromSeconds(2), MaxBackoff = TimeSpan.FromSeconds(1) };
        Assert.Equal(TimeSpan.FromSeconds(2), RefitWorker.Backoff(o, 3));
    }
}
