using System.Globalization;
using Forecast.Storage.Forecasts;
using Microsoft.AspNetCore.Diagnostics;

namespace Forecast.Api.Infrastructure;

/// <summary>Answers 503 with Retry-After and problem details when a request fails because PostgreSQL cannot be
/// reached (stopped, restarting, refusing connections, timing out), instead of the generic 500.</summary>
/// <remarks>The one place where that mapping is made, for every endpoint, reads and writes alike; which failures
/// count is <see cref="DatabaseFailure.IsUnavailable"/>. Nothing is retried here. A batch of events is one
/// transaction, so it is stored whole or not at all, and posting it again is safe (stored events come back
/// "unchanged"); only a connection lost during the commit itself leaves the caller unsure which. Npgsql's pool opens fresh
/// connections once the server is back, so the service recovers without a restart.</remarks>
public sealed class DatabaseOutageHandler(ILogger<DatabaseOutageHandler> log) : IExceptionHandler
{
    /// <summary>Seconds a client is asked to wait: about what a PostgreSQL restart or fail-over takes (common practice).</summary>
    public const int RetryAfterSeconds = 5;

    public async ValueTask<bool> TryHandleAsync(HttpContext http, Exception exception, CancellationToken ct)
    {
        if (!DatabaseFailure.IsUnavailable(exception) || http.Response.HasStarted) return false;
        log.LogWarning("{Method} {Path}: database unavailable ({Error}); answered 503", http.Request.Method,
            http.Request.Path.Value, exception.Message);
        http.Response.Headers.RetryAfter = RetryAfterSeconds.ToString(CultureInfo.InvariantCulture);
        http.Response.Headers.CacheControl = "no-store";
        await Problems.Unavailable(
            $"The database cannot be reached, so this request may not have been carried out. Retry after {RetryAfterSeconds} s.")
            .ExecuteAsync(http);
        return true;
    }
}
