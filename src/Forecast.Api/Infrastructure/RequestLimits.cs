using System.ComponentModel.DataAnnotations;
using System.Globalization;
using Microsoft.AspNetCore.Http.Timeouts;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Infrastructure;

/// <summary>Section <c>RequestLimits</c>: how long one request may take, from its first byte to its answer.
/// </summary>
/// <remarks>The size limit is Kestrel's <c>MaxRequestBodySize</c>, set from <c>Ingest:MaxBodyBytes</c> in
/// Program.cs (catalog uploads raise it per request to <c>Ingest:MaxCatalogBodyBytes</c>). Kestrel's own defaults
/// bound slow clients below this: request headers within 30 s, and a body arriving at 240 bytes/s or more after a
/// 5 s grace. docs/THREAT-MODEL.md lists every limit.</remarks>
public sealed class RequestLimitsOptions
{
    public const string Section = "RequestLimits";

    /// <summary>Default 2 minutes: 200,000 JSON events (at most 64 MiB) are stored in about 10 s on this project's
    /// test machine (docs/PERFORMANCE.md), so a slow feed link still fits; raise it for catalog files of hundreds
    /// of MiB over slow links.</summary>
    [Range(typeof(TimeSpan), "00:00:00.100", "01:00:00")]
    public TimeSpan Timeout { get; init; } = TimeSpan.FromMinutes(2);
}

public static class RequestLimits
{
    /// <summary>ASP.NET Core's request timeouts as the default policy of every endpoint: when the time is up the
    /// request's cancellation token fires, and an answer not yet started becomes a 504 problem.</summary>
    /// <remarks>The middleware does nothing while a debugger is attached (its documented behaviour).</remarks>
    public static IServiceCollection AddRequestLimits(this IServiceCollection services)
    {
        services.AddOptions<RequestLimitsOptions>().BindConfiguration(RequestLimitsOptions.Section)
            .ValidateDataAnnotations().ValidateOnStart();
        services.AddRequestTimeouts();
        services.AddOptions<RequestTimeoutOptions>().Configure<IOptions<RequestLimitsOptions>>((o, limits) =>
        {
            var timeout = limits.Value.Timeout;
            o.DefaultPolicy = new RequestTimeoutPolicy
            {
                Timeout = timeout,
                TimeoutStatusCode = StatusCodes.Status504GatewayTimeout,
                WriteTimeoutResponse = context => TypedResults.Problem(
                    statusCode: StatusCodes.Status504GatewayTimeout, type: Problems.TypeBase + "timeout",
                    title: "The request took too long",
                    detail: "A request must be sent and answered within " +
                        timeout.TotalSeconds.ToString("0.###", CultureInfo.InvariantCulture) + " s. Each write is " +
                        "all or nothing and re-posting events is idempotent: check the resource or retry, with " +
                        "smaller batches.")
                    .ExecuteAsync(context),
            };
        });
        return services;
    }
}
