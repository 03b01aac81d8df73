using Microsoft.AspNetCore.Diagnostics.HealthChecks;

namespace Forecast.Api.Infrastructure;

public static class Operations
{
    public const string RequestIdHeader = "X-Request-Id";

    /// <summary>Liveness (the process answers) and readiness (the database answers too).</summary>
    public static IEndpointRouteBuilder MapOperations(this IEndpointRouteBuilder app)
    {
        app.MapHealthChecks("/health/live", new HealthCheckOptions { Predicate = _ => false }).WithTags("Health");
        app.MapHealthChecks("/health/ready", new HealthCheckOptions { Predicate = c => c.Tags.Contains("ready") })
            .WithTags("Health");
        return app;
    }

    /// <summary>Echoes the request id (the one in every log line of the request) so a caller can quote it.</summary>
    public static IApplicationBuilder UseRequestId(this IApplicationBuilder app) => app.Use((context, next) =>
    {
        context.Response.Headers[RequestIdHeader] = context.TraceIdentifier;
        return next(context);
    });
}
