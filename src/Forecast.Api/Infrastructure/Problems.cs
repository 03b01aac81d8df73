using Microsoft.AspNetCore.Http.HttpResults;

namespace Forecast.Api.Infrastructure;

/// <summary>Every error answer of the API (RFC 9457 problem details), with a stable <c>type</c> per kind.</summary>
public static class Problems
{
    public const string TypeBase = "urn:forecast:problem:";

    public static ProblemHttpResult NotFound(string what, object key, string? hint = null) => Make(
        StatusCodes.Status404NotFound, "not-found", "Not found", $"No {what} '{key}' exists." + (hint is null ? "" : " " + hint));

    public static ProblemHttpResult BadRequest(string kind, string title, string detail) =>
        Make(StatusCodes.Status400BadRequest, kind, title, detail);

    public static ValidationProblem Invalid(IDictionary<string, string[]> errors, string detail) =>
        TypedResults.ValidationProblem(errors, detail: detail, title: "The request is not valid",
            type: TypeBase + "validation");

    public static ProblemHttpResult Malformed(string detail) => Make(StatusCodes.Status400BadRequest,
        "malformed-body", "The request body cannot be read", detail);

    public static ProblemHttpResult TooLarge(long limitBytes) => Make(StatusCodes.Status413PayloadTooLarge,
        "body-too-large", "The request body is too large", $"Send at most {limitBytes} bytes in one request.");

    public static ProblemHttpResult UnsupportedMediaType(string? got, string expected) =>
        Make(StatusCodes.Status415UnsupportedMediaType, "unsupported-media-type", "Unsupported content type",
            $"Content type '{got ?? "(none)"}' is not accepted here; send {expected}.");

    public static ProblemHttpResult Conflict(string detail) =>
        Make(StatusCodes.Status409Conflict, "conflict", "Conflict", detail);

    public static ProblemHttpResult Unauthorized(string detail) => Make(StatusCodes.Status401Unauthorized,
        "unauthorized", "An API key is required", detail);

    public static ProblemHttpResult Forbidden(string detail) => Make(StatusCodes.Status403Forbidden,
        "forbidden", "This key may not do that", detail);

    public static ProblemHttpResult Unavailable(string detail) => Make(StatusCodes.Status503ServiceUnavailable,
        "unavailable", "The service is temporarily unavailable", detail);

    static ProblemHttpResult Make(int status, string kind, string title, string detail) =>
        TypedResults.Problem(statusCode: status, type: TypeBase + kind, title: title, detail: detail);
}
