namespace Forecast.Api.Dashboard;

/// <summary>Security headers on every answer: the dashboard's pages and plots, the Swagger UI and the API.</summary>
/// <remarks>Content-Security-Policy (W3C CSP Level 3): pages load scripts, styles and data only from this origin,
/// no inline script, and may not be framed (<c>frame-ancestors 'none'</c>, which supersedes X-Frame-Options);
/// analyst plots are shown from <c>blob:</c> URLs because an image request cannot carry the key. SVG plots get a
/// policy of their own: no scripts or fetches at all, only the inline presentation styles the exporter writes. The
/// Swagger UI runs its own scripts from this origin and sets inline styles and data: images, which its policy allows;
/// it may not be framed either. Every other answer (JSON, CSV, XML, text) gets <c>default-src 'none'</c>: nothing
/// in it may run or load anything if a browser ever renders it. X-Content-Type-Options: nosniff (WHATWG Fetch) and
/// Referrer-Policy: no-referrer (W3C Referrer Policy) are on every answer, so neither a key in sessionStorage nor a
/// sequence id leaks to another site. Paths are matched ignoring case, as routing matches them.</remarks>
public sealed class SecurityHeaders(RequestDelegate next)
{
    public const string PagePolicy =
        "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' blob:; connect-src 'self'; " +
        "font-src 'self'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'";

    public const string SvgPolicy = "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'self'";

    public const string SwaggerPolicy =
        "default-src 'none'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; " +
        "connect-src 'self'; font-src 'self' data:; base-uri 'none'; form-action 'self'; frame-ancestors 'none'";

    public const string DataPolicy = "default-src 'none'; frame-ancestors 'none'";

    const StringComparison IgnoreCase = StringComparison.OrdinalIgnoreCase;

    public Task InvokeAsync(HttpContext context)
    {
        var path = context.Request.Path;
        var p = path.Value ?? "";
        var isPage = path.StartsWithSegments("/dashboard", IgnoreCase);
        var isSwagger = path.StartsWithSegments("/swagger", IgnoreCase);
        var isPlot = p.EndsWith(".svg", IgnoreCase) && p.Contains("/plots/", IgnoreCase);
        var policy = isPage ? PagePolicy : isSwagger ? SwaggerPolicy : isPlot ? SvgPolicy : DataPolicy;
        context.Response.OnStarting(() =>
        {
            var h = context.Response.Headers;
            h.XContentTypeOptions = "nosniff";
            h["Referrer-Policy"] = "no-referrer";
            h.ContentSecurityPolicy = policy;
            if (isPage || isSwagger) h["Cross-Origin-Opener-Policy"] = "same-origin";
            return Task.CompletedTask;
        });
        return next(context);
    }
}
