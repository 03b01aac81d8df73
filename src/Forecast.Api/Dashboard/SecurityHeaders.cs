namespace Forecast.Api.Dashboard;

/// <summary>Security headers for the dashboard's pages and plots.</summary>
/// <remarks>Content-Security-Policy (W3C CSP Level 3): pages load scripts, styles and data only from this origin,
/// no inline script, and may not be framed (<c>frame-ancestors 'none'</c>, which supersedes X-Frame-Options);
/// analyst plots are shown from <c>blob:</c> URLs because an image request cannot carry the key. SVG plots get a
/// policy of their own: no scripts or fetches at all, only the inline presentation styles the exporter writes.
/// X-Content-Type-Options: nosniff (WHATWG Fetch) and Referrer-Policy: no-referrer (W3C Referrer Policy), so
/// neither a key in sessionStorage nor a sequence id leaks to another site.</remarks>
public sealed class SecurityHeaders(RequestDelegate next)
{
    public const string PagePolicy =
        "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' blob:; connect-src 'self'; " +
        "font-src 'self'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'";

    public const string SvgPolicy = "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'self'";

    public Task InvokeAsync(HttpContext context)
    {
        var path = context.Request.Path;
        var isPage = path.StartsWithSegments("/dashboard", StringComparison.OrdinalIgnoreCase);
        var isPlot = path.Value is { } p && p.EndsWith(
            ".svg", StringComparison.OrdinalIgnoreCase) && p.Contains("/plots/", StringComparison.Ordinal);
        var isView = path.Value is { } v && v.EndsWith(
            "/dashboard", StringComparison.Ordinal) && v.StartsWith("/v1/", StringComparison.Ordinal);
        if (isPage || isPlot || isView)
        {
            context.Response.OnStarting(() =>
            {
                var h = context.Response.Headers;
                h.XContentTypeOptions = "nosniff";
                h["Referrer-Policy"] = "no-referrer";
                if (isPage) h.ContentSecurityPolicy = PagePolicy;
                else if (isPlot) h.ContentSecurityPolicy = SvgPolicy;
                else h.ContentSecurityPolicy = "default-src 'none'; frame-ancestors 'none'";
                if (isPage) h["Cross-Origin-Opener-Policy"] = "same-origin";
                return Task.CompletedTask;
            });
        }
        return next(context);
    }
}
