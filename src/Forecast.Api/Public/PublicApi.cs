using System.ComponentModel.DataAnnotations;
using System.Globalization;
using System.Threading.RateLimiting;
using Forecast.Api.Infrastructure;
using Microsoft.AspNetCore.RateLimiting;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Public;

/// <summary>Section <c>PublicApi</c>: caching, CORS and rate limits of <c>/v1/public</c>.</summary>
public sealed class PublicApiOptions
{
    public const string Section = "PublicApi";

    /// <summary>max-age of public answers, seconds.</summary>
    [Range(0, 86_400)] public int CacheSeconds { get; init; } = 60;

    /// <summary>Origins allowed to read from browsers; empty (the default) or "*" allows any.</summary>
    /// <remarks>No default elements: the configuration binder appends to an array's initial contents.</remarks>
    public string[] CorsOrigins { get; init; } = [];

    /// <summary>Requests per client address per window.</summary>
    [Range(1, 1_000_000)] public int PermitLimit { get; init; } = 120;

    [Range(typeof(TimeSpan), "00:00:01", "01:00:00")] public TimeSpan Window { get; init; } = TimeSpan.FromMinutes(1);

    /// <summary>CAP 1.2 <c>sender</c>: globally unique to this service, for example its domain name
    /// (CAP 1.2, 3.2.1: no spaces, commas or restricted characters).</summary>
    [Required, RegularExpression(@"^[^\s,<&]+$")] public string CapSender { get; init; } = "aftershock-forecast.invalid";

    /// <summary>Absolute base of the links in the GeoJSON feed and CAP alerts, e.g. https://forecast.example.org,
    /// for a service behind a proxy; empty (the default) takes the request's own scheme and host.</summary>
    [Url] public string? BaseUrl { get; init; }
}

public static class PublicApi
{
    public const string CorsPolicy = "public";
    public const string RatePolicy = "public";

    /// <summary>CORS for public reads only (GET and HEAD, no credentials) and the built-in rate limiter: a fixed
    /// window per client address, answered with 429, Retry-After and problem details.</summary>
    public static IServiceCollection AddPublicApi(this IServiceCollection services, IConfiguration configuration)
    {
        services.AddOptions<PublicApiOptions>().BindConfiguration(PublicApiOptions.Section)
            .ValidateDataAnnotations().ValidateOnStart();
        var o = configuration.GetSection(PublicApiOptions.Section).Get<PublicApiOptions>() ?? new PublicApiOptions();

        services.AddCors(cors => cors.AddPolicy(CorsPolicy, p =>
        {
            if (o.CorsOrigins.Length == 0 || o.CorsOrigins.Contains("*")) p.AllowAnyOrigin();
            else p.WithOrigins(o.CorsOrigins);
            p.WithMethods("GET", "HEAD").WithHeaders("If-None-Match", "If-Modified-Since")
                .WithExposedHeaders("ETag", "Last-Modified", "Retry-After", "Cache-Control");
        }));

        services.AddRateLimiter(limiter =>
        {
            limiter.RejectionStatusCode = StatusCodes.Status429TooManyRequests;
            limiter.AddPolicy(RatePolicy, http =>
            {
                var opts = http.RequestServices.GetRequiredService<IOptions<PublicApiOptions>>().Value;
                return RateLimitPartition.GetFixedWindowLimiter(
                    http.Connection.RemoteIpAddress?.ToString() ?? "unknown",
                    _ => new FixedWindowRateLimiterOptions
                    {
                        PermitLimit = opts.PermitLimit, Window = opts.Window, QueueLimit = 0, AutoReplenishment = true,
                    });
            });
            limiter.OnRejected = async (context, ct) =>
            {
                var opts = context.HttpContext.RequestServices.GetRequiredService<IOptions<PublicApiOptions>>().Value;
                var retry = context.Lease.TryGetMetadata(MetadataName.RetryAfter, out var after) ? after : opts.Window;
                var seconds = Math.Max(1, (int)Math.Ceiling(retry.TotalSeconds));
                context.HttpContext.Response.Headers.RetryAfter = seconds.ToString(CultureInfo.InvariantCulture);
                await TypedResults.Problem(statusCode: StatusCodes.Status429TooManyRequests,
                    type: Problems.TypeBase + "rate-limited", title: "Too many requests",
                    detail: $"This address sent more than {opts.PermitLimit} requests in {opts.Window}; retry after {seconds} s.")
                    .ExecuteAsync(context.HttpContext);
            };
        });
        return services;
    }
}
