using System.Net;
using System.Net.Http.Json;
using System.Text;
using System.Text.Json;

namespace Forecast.Api.Tests;

/// <summary>Bodies and query values the framework cannot bind get the service's own RFC 9457 problem, saying where.
/// </summary>
public class BindingProblemTests(ApiServer api) : IClassFixture<ApiServer>
{
    static async Task<JsonElement> Problem(HttpResponseMessage response, HttpStatusCode status)
    {
        Assert.Equal(status, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
        return await response.Content.ReadFromJsonAsync<JsonElement>();
    }

    [Fact]
    public async Task AnUnknownFieldIsNamedByItsJsonPath()
    {
        using var admin = api.Client(ApiServer.AdminKey);
        var response = await admin.PostAsync("/v1/keys",
            new StringContent("""{"name":"x","role":"feeder","colour":"red"}""", Encoding.UTF8, "application/json"));
        var problem = await Problem(response, HttpStatusCode.BadRequest);
        Assert.Equal("urn:forecast:problem:malformed-body", problem.GetProperty("type").GetString());
        var detail = problem.GetProperty("detail").GetString()!;
        Assert.Contains("$.colour", detail, StringComparison.Ordinal);
        Assert.Contains("not one this endpoint accepts", detail, StringComparison.Ordinal);
        Assert.DoesNotContain("Forecast.Api", detail, StringComparison.Ordinal);   // no .NET type names leak
    }

    [Fact]
    public async Task AValueOfTheWrongTypeGivesItsLineAndByte()
    {
        using var admin = api.Client(ApiServer.AdminKey);
        var response = await admin.PostAsync("/v1/keys",
            new StringContent("""{"name": 12, "role": "feeder"}""", Encoding.UTF8, "application/json"));
        var problem = await Problem(response, HttpStatusCode.BadRequest);
        Assert.Equal("urn:forecast:problem:malformed-body", problem.GetProperty("type").GetString());
        Assert.Contains("$.name (line 1, byte", problem.GetProperty("detail").GetString()!, StringComparison.Ordinal);
    }

    [Fact]
    public async Task AQueryValueOfTheWrongTypeIsNamed()
    {
        using var admin = api.Client(ApiServer.AdminKey);
        var problem = await Problem(await admin.GetAsync("/v1/sequences/1/forecasts?limit=many"), HttpStatusCode.BadRequest);
        Assert.Equal("urn:forecast:problem:malformed-body", problem.GetProperty("type").GetString());
        Assert.Contains("limit", problem.GetProperty("detail").GetString()!, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ABodyThatIsNotJsonIsAnUnsupportedMediaType()
    {
        using var admin = api.Client(ApiServer.AdminKey);
        var response = await admin.PostAsync("/v1/keys", new StringContent("name=x", Encoding.UTF8, "application/x-www-form-urlencoded"));
        var problem = await Problem(response, HttpStatusCode.UnsupportedMediaType);
        Assert.Equal("urn:forecast:problem:unsupported-media-type", problem.GetProperty("type").GetString());
        Assert.Equal("Unsupported content type", problem.GetProperty("title").GetString());
    }

    [Fact]
    public async Task AnUnsupportedEventBodyNamesEveryFormatTheEndpointTakes()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var response = await feeder.PostAsync("/v1/events", new StringContent("id=x", Encoding.UTF8, "application/x-www-form-urlencoded"));
        var problem = await Problem(response, HttpStatusCode.UnsupportedMediaType);
        Assert.Equal("Unsupported content type", problem.GetProperty("title").GetString());
        var detail = problem.GetProperty("detail").GetString()!;
        foreach (var type in new[] { "application/json", "application/vnd.quakeml+xml", "text/plain" })
            Assert.Contains(type, detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task AnEmptyBatchSaysItHoldsNoEvents()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        var response = await feeder.PostAsync("/v1/events", new StringContent("[]", Encoding.UTF8, "application/json"));
        var problem = await Problem(response, HttpStatusCode.BadRequest);
        Assert.Equal("The batch holds no events; nothing was stored.", problem.GetProperty("detail").GetString());
    }
}
