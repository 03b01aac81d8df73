using System.Net;

namespace Forecast.Api.Tests;

public class HealthTests(ApiServer api) : IClassFixture<ApiServer>
{
    [Fact]
    public async Task LivenessAndReadinessAnswerHealthyWithTheDatabaseUp()
    {
        using var client = api.Client();
        Assert.Equal(HttpStatusCode.OK, (await client.GetAsync("/health/live")).StatusCode);
        var ready = await client.GetAsync("/health/ready");
        Assert.Equal(HttpStatusCode.OK, ready.StatusCode);
        Assert.Equal("Healthy", await ready.Content.ReadAsStringAsync());
    }

    [Fact]
    public async Task EveryResponseCarriesARequestId()
    {
        using var client = api.Client();
        var response = await client.GetAsync("/health/live");
        Assert.False(string.IsNullOrEmpty(response.Headers.GetValues("X-Request-Id").Single()));
    }

    [Theory]
    [InlineData("/v1/sequences/{id}/forecasts/{number}/release", "post", "200,400,401,403,404,409,413,415,503,504")]
    [InlineData("/v1/keys", "post", "201,400,401,403,413,415,503,504")]
    [InlineData("/v1/events", "get", "200,400,401,503,504")]
    [InlineData("/v1/public/sequences/{id}/forecast", "get", "200,400,404,429,503,504")]
    public async Task OpenApiListsTheProblemAnswersAnOperationCanGive(string path, string method, string statuses)
    {
        // OpenAPI Specification 3.0, Responses Object: each documented status, with RFC 9457 problem bodies.
        using var client = api.Client();
        var doc = System.Text.Json.JsonDocument.Parse(await client.GetStringAsync("/swagger/v1/swagger.json")).RootElement;
        var responses = doc.GetProperty("paths").GetProperty(path).GetProperty(method).GetProperty("responses");
        var listed = responses.EnumerateObject().Select(r => r.Name).Order(StringComparer.Ordinal).ToList();
        Assert.Equal(statuses.Split(','), listed);
        foreach (var r in responses.EnumerateObject().Where(r => r.Name[0] is '4' or '5'))
            Assert.True(r.Value.GetProperty("content").TryGetProperty("application/problem+json", out _), $"{path} {r.Name}");
    }

    [Fact]
    public async Task SwaggerDescribesTheEventEndpoints()
    {
        using var client = api.Client();
        var json = await client.GetStringAsync("/swagger/v1/swagger.json");
        Assert.Contains("\"/v1/events\"", json);
        Assert.Contains("\"/v1/keys\"", json);
        // OpenAPI 3 HTTP bearer scheme, so Swagger UI can send a key (OpenAPI Specification 3.0, Security Scheme Object).
        var schemes = System.Text.Json.JsonDocument.Parse(json).RootElement.GetProperty("components").GetProperty("securitySchemes");
        Assert.Equal("bearer", schemes.GetProperty("bearer").GetProperty("scheme").GetString());
    }
}
