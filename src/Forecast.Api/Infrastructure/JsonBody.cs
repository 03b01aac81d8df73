using System.Reflection;
using Microsoft.AspNetCore.Http.Metadata;

namespace Forecast.Api.Infrastructure;

/// <summary>A 200 answer with a JSON body serialised beforehand (a cached rendering), described to OpenAPI as
/// <typeparamref name="T"/> like <c>Ok&lt;T&gt;</c>.</summary>
public sealed class JsonBody<T>(byte[] utf8Json) : IResult, IStatusCodeHttpResult, IContentTypeHttpResult, IEndpointMetadataProvider
{
    const string JsonContentType = "application/json; charset=utf-8";

    public int? StatusCode => StatusCodes.Status200OK;

    public string ContentType => JsonContentType;

    public Task ExecuteAsync(HttpContext httpContext)
    {
        var response = httpContext.Response;
        response.StatusCode = StatusCodes.Status200OK;
        response.ContentType = JsonContentType;
        response.ContentLength = utf8Json.Length;
        return response.Body.WriteAsync(utf8Json, httpContext.RequestAborted).AsTask();
    }

    public static void PopulateMetadata(MethodInfo method, EndpointBuilder builder) =>
        builder.Metadata.Add(new ProducesResponseTypeMetadata(StatusCodes.Status200OK, typeof(T), ["application/json"]));
}
