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
