using System.Globalization;
using System.Text.Json;
using Microsoft.AspNetCore.Diagnostics;

namespace Forecast.Api.Infrastructure;

/// <summary>Requests the framework cannot bind (a body that is not JSON of the endpoint's shape, an unknown field,
/// a query value of the wrong type) answer with the service's own problem details saying where, rather than the
/// framework's bare 400.</summary>
/// <remarks>Minimal APIs throw <see cref="BadHttpRequestException"/> for such requests once
/// <see cref="RouteHandlerOptions.ThrowOnBadRequest"/> is set; this handler turns it into an RFC 9457 problem with
/// the exception's status (400; 413 for a body over the limit, 415 for a body that is not JSON). The message names the JSON path, line and byte
/// but never a .NET type.</remarks>
public sealed class BadRequestHandler : IExceptionHandler
{
    public async ValueTask<bool> TryHandleAsync(HttpContext http, Exception exception, CancellationToken ct)
    {
        if (exception is not BadHttpRequestException bad || http.Response.HasStarted) return false;
        var result = bad.StatusCode switch
        {
            StatusCodes.Status413PayloadTooLarge => Problems.TooLarge(http.RequestServices
                .GetRequiredService<Microsoft.Extensions.Options.IOptions<IngestOptions>>().Value.MaxBodyBytes),
            StatusCodes.Status415UnsupportedMediaType => Problems.UnsupportedMediaType(http.Request.ContentType,
                "application/json"),
            StatusCodes.Status400BadRequest => Problems.Malformed(Describe(bad)),
            // Kestrel's own refusals (408 for a body arriving too slowly, and the like) keep their status.
            _ => TypedResults.Problem(statusCode: bad.StatusCode, type: Problems.TypeBase + "bad-request",
                title: "The request cannot be served", detail: bad.Message),
        };
        await result.ExecuteAsync(http);
        return true;
    }

    static string Describe(BadHttpRequestException bad)
    {
        if (bad.InnerException is JsonException json)
        {
            var where = json.Path is { Length: > 0 } path ? $" at {path}" : "";
            var line = json.LineNumber is { } l ? string.Create(CultureInfo.InvariantCulture, $" (line {l + 1}") : null;
            var position = line is not null && json.BytePositionInLine is { } b
                ? string.Create(CultureInfo.InvariantCulture, $", byte {b + 1})") : line is not null ? ")" : "";
            var unknown = json.Message.Contains("could not be mapped", StringComparison.Ordinal)
                ? "the field is not one this endpoint accepts" : "a value has the wrong type, or the JSON is broken";
            return $"The JSON body cannot be read{where}{line}{position}: {unknown}. The OpenAPI description at " +
                "/swagger/v1/swagger.json lists the fields.";
        }
        if (bad.Message.StartsWith("Failed to read parameter", StringComparison.Ordinal) ||
            bad.Message.Contains("request body", StringComparison.OrdinalIgnoreCase))
            return "The request body cannot be read as the JSON this endpoint expects; send application/json.";
        // "Failed to bind parameter "int limit" from "abc"." and the like: they name the parameter and the value.
        return bad.Message;
    }
}

public static class BadRequestSetup
{
    /// <summary>Makes binding failures exceptions, answered by <see cref="BadRequestHandler"/>.</summary>
    public static IServiceCollection AddBadRequestProblems(this IServiceCollection services)
    {
        services.Configure<RouteHandlerOptions>(o => o.ThrowOnBadRequest = true);
        services.AddExceptionHandler<BadRequestHandler>();
        // Answers the framework gives without an exception (no such route, wrong method, a body that is not JSON)
        // get the service's problem types too, so a client can switch on one vocabulary.
        services.Configure<ProblemDetailsOptions>(o => o.CustomizeProblemDetails = context =>
        {
            var problem = context.ProblemDetails;
            if (problem.Type is { } type && type.StartsWith(Problems.TypeBase, StringComparison.Ordinal)) return;
            (problem.Type, problem.Detail) = context.HttpContext.Response.StatusCode switch
            {
                StatusCodes.Status404NotFound => (Problems.TypeBase + "not-found",
                    problem.Detail ?? "Nothing is served at this path; the OpenAPI description at /swagger/v1/swagger.json lists the routes (Swagger UI at /swagger/, the dashboard at /dashboard/)."),
                StatusCodes.Status405MethodNotAllowed => (Problems.TypeBase + "method-not-allowed",
                    problem.Detail ?? $"This path does not take {context.HttpContext.Request.Method}."),
                StatusCodes.Status415UnsupportedMediaType => (Problems.TypeBase + "unsupported-media-type",
                    problem.Detail ?? $"Content type '{context.HttpContext.Request.ContentType ?? "(none)"}' is not accepted here; send " +
                    Accepted(context.HttpContext) + "."),
                _ => (problem.Type, problem.Detail),
            };
            // The same title as the service's own 415 (Problems.UnsupportedMediaType), for one vocabulary.
            if (context.HttpContext.Response.StatusCode == StatusCodes.Status415UnsupportedMediaType)
                problem.Title = "Unsupported content type";
        });
        return services;
    }

    /// <summary>The content types the endpoints of this method and path declare (their Accepts metadata), or JSON
    /// when they declare none.</summary>
    /// <remarks>Routing answers a content type no candidate accepts with an endpoint of its own that carries no
    /// metadata, so the candidates are found again here; this runs only for a 415.</remarks>
    static string Accepted(HttpContext http)
    {
        var request = http.Request;
        var types = http.RequestServices.GetRequiredService<EndpointDataSource>().Endpoints
            .OfType<RouteEndpoint>()
            .Where(e => e.Metadata.GetMetadata<IHttpMethodMetadata>()?.HttpMethods.Contains(request.Method) ?? true)
            .Where(e => new Microsoft.AspNetCore.Routing.Template.TemplateMatcher(
                Microsoft.AspNetCore.Routing.Template.TemplateParser.Parse(e.RoutePattern.RawText ?? ""),
                new RouteValueDictionary()).TryMatch(request.Path, new RouteValueDictionary()))
            .SelectMany(e => e.Metadata.GetMetadata<Microsoft.AspNetCore.Http.Metadata.IAcceptsMetadata>()?.ContentTypes
                ?? [])
            .Distinct()
            .ToList();
        return types.Count > 0 ? string.Join(", ", types) : "application/json";
    }
}
