using System.Security.Cryptography;
using System.Text;
using Forecast.Api.Auth;
using Forecast.Api.Infrastructure;
using Forecast.Api.Public;
using Forecast.Api.Sequences;
using Forecast.Plots;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;
using Microsoft.AspNetCore.Http.HttpResults;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Dashboard;

/// <summary>The duty dashboard: its pages (static files under /dashboard), the views they read and the plots as
/// SVG, each plot at its own URL so other dashboards can embed it.</summary>
/// <remarks>Public views and plots show only the released forecast of a sequence (as <c>/v1/public</c> does);
/// the analyst's show any forecast by number and need the analyst key.</remarks>
public static class DashboardEndpoints
{
    public const string SvgType = "image/svg+xml";

    /// <summary>Security headers, then the pages from wwwroot (index.html for /dashboard/).</summary>
    public static WebApplication UseDashboard(this WebApplication app)
    {
        app.UseMiddleware<SecurityHeaders>();
        app.UseDefaultFiles();
        app.UseStaticFiles(new StaticFileOptions
        {
            // Pages and scripts change with a deployment; revalidate rather than run yesterday's script.
            OnPrepareResponse = c => c.Context.Response.Headers.CacheControl = "no-cache",
        });
        return app;
    }

    public static IEndpointRouteBuilder MapDashboard(this IEndpointRouteBuilder app)
    {
        var pub = app.MapGroup("/v1/public/sequences/{id:long}").WithTags("Dashboard")
            .RequireCors(PublicApi.CorsPolicy).RequireRateLimiting(PublicApi.RatePolicy);
        pub.MapGet("/dashboard", PublicView).WithName("PublicDashboardView")
            .WithSummary("The released forecast as the public dashboard shows it: table with words and numbers, " +
                "cautions, freshness, plot links");
        pub.MapGet("/plots/{kind}.svg", PublicPlot).WithName("PublicDashboardPlot")
            .WithSummary("A plot of the released forecast as SVG: table, magnitude-time, cumulative, map, " +
                "frequency-magnitude or rate")
            .Produces(StatusCodes.Status200OK, contentType: SvgType);

        var analyst = app.MapGroup("/v1/sequences/{id:long}/forecasts/{number:int}").WithTags("Dashboard")
            .RequireAuthorization(Policies.Analyst);
        analyst.MapGet("/dashboard", AnalystView).WithName("AnalystDashboardView")
            .WithSummary("Any forecast (drafts too) as the analyst dashboard shows it, with the fit diagnostics");
        analyst.MapGet("/plots/{kind}.svg", AnalystPlot).WithName("AnalystDashboardPlot")
            .WithSummary("A plot of any forecast as SVG (drafts too)")
            .Produces(StatusCodes.Status200OK, contentType: SvgType);
        return app;
    }

    public static string PublicPlotUrl(
        long id, PlotKind k) => $"/v1/public/sequences/{id}/plots/{PlotKinds.Slug(k)}.svg";

    public static string AnalystPlotUrl(long id, int number, PlotKind k) =>
        $"/v1/sequences/{id}/forecasts/{number}/plots/{PlotKinds.Slug(k)}.svg";

    static async Task<Results<Ok<DashboardView>, StatusCodeHttpResult, ProblemHttpResult>> PublicView(
        long id, HttpContext http, SequenceStore sequences, ForecastStore forecasts, IOptions<ForecastOptions> options,
        IOptions<PublicApiOptions> publicOptions, CancellationToken ct)
    {
        var s = await sequences.FindAsync(id, ct);
        var f = s is null ? null : await forecasts.LatestAsync(id, releasedOnly: true, ct);
        if (s is null || f is null) return Problems.NotFound("released forecast of sequence", id);
        http.Response.Headers.CacheControl = $"public, max-age={publicOptions.Value.CacheSeconds}";
        if (Forecasts.ForecastViews.NotModified(
            http, f, "pd")) return TypedResults.StatusCode(StatusCodes.Status304NotModified);
        var r = DashboardData.Result(f);
        var input = await DashboardData.PlotInputAsync(s, f, r, sequences, ct);
        return TypedResults.Ok(DashboardData.View(
            s, f, r, input, options.Value.AgencyName, k => PublicPlotUrl(id, k) + Version(f), withDiagnostics: false));
    }

    static async Task<Results<Ok<DashboardView>, ProblemHttpResult>> AnalystView(
        long id, int number, HttpContext http, SequenceStore sequences, ForecastStore forecasts,
        IOptions<ForecastOptions> options, CancellationToken ct)
    {
        var s = await sequences.FindAsync(id, ct);
        var f = s is null ? null : await forecasts.FindAsync(id, number, ct);
        if (s is null || f is null) return Problems.NotFound("forecast", $"{id}/{number}");
        http.Response.Headers.CacheControl = "private, no-cache";
        var r = DashboardData.Result(f);
        var input = await DashboardData.PlotInputAsync(s, f, r, sequences, ct);
        return TypedResults.Ok(DashboardData.View(
            s, f, r, input, options.Value.AgencyName, k => AnalystPlotUrl(id, number, k) + Version(f),
            withDiagnostics: true));
    }

    static async Task<Results<ContentHttpResult, StatusCodeHttpResult, ProblemHttpResult>> PublicPlot(
        long id, string kind, HttpContext http, SequenceStore sequences, ForecastStore forecasts,
        IOptions<PublicApiOptions> publicOptions, CancellationToken ct)
    {
        if (!PlotKinds.TryParse(kind, out var k)) return UnknownPlot(kind);
        var s = await sequences.FindAsync(id, ct);
        var f = s is null ? null : await forecasts.LatestAsync(id, releasedOnly: true, ct);
        if (s is null || f is null) return Problems.NotFound("released forecast of sequence", id);
        return await PlotAsync(http, s, f, k, sequences, $"public, max-age={publicOptions.Value.CacheSeconds}", ct);
    }

    static async Task<Results<ContentHttpResult, StatusCodeHttpResult, ProblemHttpResult>> AnalystPlot(
        long id, int number, string kind, HttpContext http, SequenceStore sequences, ForecastStore forecasts,
        CancellationToken ct)
    {
        if (!PlotKinds.TryParse(kind, out var k)) return UnknownPlot(kind);
        var s = await sequences.FindAsync(id, ct);
        var f = s is null ? null : await forecasts.FindAsync(id, number, ct);
        if (s is null || f is null) return Problems.NotFound("forecast", $"{id}/{number}");
        return await PlotAsync(http, s, f, k, sequences, "private, no-cache", ct);
    }

    static async Task<Results<ContentHttpResult, StatusCodeHttpResult, ProblemHttpResult>> PlotAsync(
        HttpContext http, SequenceRow s, ForecastRecord f, PlotKind kind, SequenceStore sequences, string cacheControl,
        CancellationToken ct)
    {
        var r = DashboardData.Result(f);
        var plot = DashboardPlots.Render(kind, await DashboardData.PlotInputAsync(s, f, r, sequences, ct));
        var bytes = Encoding.UTF8.GetBytes(plot.Svg);
        // The plot depends on the forecast's state and on revisions of its events, so its validator is a digest.
        var etag = $"\"svg-{Convert.ToHexStringLower(SHA256.HashData(bytes))[..32]}\"";
        http.Response.Headers.ETag = etag;
        http.Response.Headers.CacheControl = cacheControl;
        var ifNoneMatch = http.Request.Headers.IfNoneMatch.ToString();
        if (ifNoneMatch.Split(',').Select(t => t.Trim()).Select(t => t.StartsWith(
            "W/", StringComparison.Ordinal) ? t[2..] : t)
            .Contains(etag, StringComparer.Ordinal))
        {
            return TypedResults.StatusCode(StatusCodes.Status304NotModified);
        }
        return TypedResults.Content(plot.Svg, SvgType + "; charset=utf-8", Encoding.UTF8);
    }

    /// <summary>A query that changes with the forecast's number and state, so a page's image is fetched anew
    /// when either changes.</summary>
    static string Version(ForecastRecord f) => $"?v={f.Number}-{f.State}";

    static ProblemHttpResult UnknownPlot(string kind) => Problems.NotFound("plot", kind,
        $"Known plots: {string.Join(", ", PlotKinds.All.Select(PlotKinds.Slug))}.");
}
