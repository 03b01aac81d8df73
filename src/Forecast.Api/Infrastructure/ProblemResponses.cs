using Microsoft.AspNetCore.Authorization;
using Microsoft.AspNetCore.Mvc;
using Microsoft.OpenApi;
using Swashbuckle.AspNetCore.SwaggerGen;

namespace Forecast.Api.Infrastructure;

/// <summary>Adds to each OpenAPI operation the problem answers (RFC 9457) that the service's shared machinery can
/// give it, which a handler's <c>Results&lt;...&gt;</c> union cannot show because a <c>ProblemHttpResult</c> carries
/// its status only at run time.</summary>
/// <remarks>Derived from the endpoint itself: a key policy gives 401 (and 403 when a role is required), a route
/// parameter 404, a parameter or body 400, a body 413 and 415, the public rate limit 429, the database 503 and the
/// time limit 504. Conflicts (409) are declared where they arise, with <c>ProducesProblem</c>.</remarks>
public sealed class ProblemResponses : IOperationFilter
{
    public void Apply(OpenApiOperation operation, OperationFilterContext context)
    {
        var api = context.ApiDescription;
        var metadata = api.ActionDescriptor.EndpointMetadata;
        var path = "/" + (api.RelativePath ?? "");
        var authorize = metadata.OfType<IAuthorizeData>().ToList();
        var hasBody = api.ParameterDescriptions.Any(p => p.Source.Id == "Body") || api.SupportedRequestFormats.Count > 0;

        if (authorize.Count > 0)
        {
            Add(operation, context, 401, "No key, or a malformed, unknown or revoked one");
            if (authorize.Any(a => a.Policy is not null)) Add(operation, context, 403, "The key's role may not do this");
        }
        if (path.Contains('{')) Add(operation, context, 404, "No such resource");
        if (hasBody || api.ParameterDescriptions.Any(p => p.Source.Id is "Query" or "Path"))
            Add(operation, context, 400, "The request is not valid; nothing was changed");
        if (hasBody)
        {
            Add(operation, context, 413, "The body is over the size limit");
            Add(operation, context, 415, "The content type is not one this endpoint takes");
        }
        if (path.StartsWith("/v1/public", StringComparison.Ordinal))
            Add(operation, context, 429, "Over the public rate limit; see Retry-After");
        // Every described operation is under /v1 and reads or writes the database (health checks are not described).
        Add(operation, context, 503, "The database is unreachable; see Retry-After");
        Add(operation, context, 504, "The request took longer than the time limit");
    }

    static void Add(OpenApiOperation operation, OperationFilterContext context, int status, string description)
    {
        operation.Responses ??= new OpenApiResponses();
        var key = status.ToString(System.Globalization.CultureInfo.InvariantCulture);
        if (operation.Responses.ContainsKey(key)) return;
        var schema = context.SchemaGenerator.GenerateSchema(typeof(ProblemDetails), context.SchemaRepository);
        operation.Responses[key] = new OpenApiResponse
        {
            Description = description,
            Content = new Dictionary<string, IOpenApiMediaType> { ["application/problem+json"] = new OpenApiMediaType { Schema = schema } },
        };
    }
}
