using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;

namespace Forecast.Api.Tests;

public class AccessTests(ApiServer api) : IClassFixture<ApiServer>
{
    static readonly object OneEvent = new
    {
        id = "acc-1", source = "zz", time = "2026-01-01T00:00:00Z", latitude = 0.0, longitude = 0.0, depthKm = 5.0,
        magnitude = 2.0, magnitudeType = "ML",
    };

    [Fact]
    public async Task WritesWithoutAKeyAre401WithABearerChallenge()
    {
        using var anonymous = api.Client();
        var response = await anonymous.PostAsJsonAsync("/v1/events", OneEvent);
        Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
        Assert.Equal("Bearer", response.Headers.WwwAuthenticate.Single().Scheme);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
    }

    [Fact]
    public async Task ReadsOutsidePublicNeedAKey()
    {
        using var anonymous = api.Client();
        Assert.Equal(HttpStatusCode.Unauthorized, (await anonymous.GetAsync("/v1/events")).StatusCode);
    }

    [Theory]
    [InlineData("Basic dXNlcjpwYXNz")]
    [InlineData("Bearer short")]
    [InlineData("Bearer fk_not/a*key!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!!")]
    [InlineData("Bearer fk_AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA")]
    public async Task MalformedOrUnknownKeysAre401(string header)
    {
        using var client = api.Client();
        client.DefaultRequestHeaders.TryAddWithoutValidation("Authorization", header);
        var response = await client.GetAsync("/v1/events");
        Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
        // RFC 9110, 11.6.1: a 401 carries a challenge; RFC 6750, 3: the Bearer scheme.
        Assert.StartsWith("Bearer", response.Headers.WwwAuthenticate.Single().ToString(), StringComparison.Ordinal);
        var problem = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.False(string.IsNullOrEmpty(problem.GetProperty("detail").GetString()));
    }

    [Fact]
    public async Task AFeederKeyMayPostEventsButNotManageKeys()
    {
        using var feeder = api.Client(await api.NewKeyAsync("feeder"));
        Assert.True((await feeder.PostAsJsonAsync("/v1/events", OneEvent)).IsSuccessStatusCode);
        var response = await feeder.GetAsync("/v1/keys");
        Assert.Equal(HttpStatusCode.Forbidden, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType!.MediaType);
        Assert.Equal("This request needs a key of role admin; this key's role is feeder.",
            (await response.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("detail").GetString());
        var release = await feeder.PostAsync("/v1/sequences/1/forecasts/1/release", null);
        Assert.Equal(HttpStatusCode.Forbidden, release.StatusCode);
        Assert.Equal("This request needs a key of role analyst or admin; this key's role is feeder.",
            (await release.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("detail").GetString());
    }

    [Fact]
    public async Task AnAnalystKeyMayReadAndPostButNotManageKeys()
    {
        using var analyst = api.Client(await api.NewKeyAsync("analyst"));
        Assert.Equal(HttpStatusCode.OK, (await analyst.GetAsync("/v1/events")).StatusCode);
        Assert.True((await analyst.PostAsJsonAsync("/v1/events", OneEvent)).IsSuccessStatusCode);
        Assert.Equal(HttpStatusCode.Forbidden,
            (await analyst.PostAsJsonAsync("/v1/keys", new { name = "x", role = "admin" })).StatusCode);
    }

    [Fact]
    public async Task ARevokedKeyIsRefusedAtOnce()
    {
        using var admin = api.Client(ApiServer.AdminKey);
        var created = await (await admin.PostAsJsonAsync("/v1/keys", new { name = "leaked", role = "feeder" }))
            .Content.ReadFromJsonAsync<JsonElement>();
        using var feeder = api.Client(created.GetProperty("key").GetString());
        Assert.Equal(HttpStatusCode.OK, (await feeder.GetAsync("/v1/events")).StatusCode);

        var revoke = await admin.PostAsync($"/v1/keys/{created.GetProperty("id").GetInt64()}/revoke", null);
        Assert.Equal(HttpStatusCode.OK, revoke.StatusCode);
        Assert.Equal(HttpStatusCode.Unauthorized, (await feeder.GetAsync("/v1/events")).StatusCode);
    }

    [Fact]
    public async Task ANewKeysLocationNamesItWithoutTheSecretAndShowsItsRevocation()
    {
        // RFC 9110, 15.3.2: a 201's Location identifies the resource created.
        using var admin = api.Client(ApiServer.AdminKey);
        var post = await admin.PostAsJsonAsync("/v1/keys", new { name = "located", role = "analyst" });
        Assert.Equal(HttpStatusCode.Created, post.StatusCode);
        var secret = (await post.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("key").GetString()!;
        var location = post.Headers.Location!.ToString();
        var one = await admin.GetAsync(location);
        Assert.Equal(HttpStatusCode.OK, one.StatusCode);
        var text = await one.Content.ReadAsStringAsync();
        Assert.DoesNotContain(secret, text);
        var view = JsonDocument.Parse(text).RootElement;
        Assert.Equal("located", view.GetProperty("name").GetString());
        Assert.Equal(JsonValueKind.Null, view.GetProperty("revokedAt").ValueKind);

        await admin.PostAsync(location + "/revoke", null);
        var revoked = await admin.GetFromJsonAsync<JsonElement>(location);
        Assert.NotEqual(JsonValueKind.Null, revoked.GetProperty("revokedAt").ValueKind);
        var missing = await admin.GetAsync("/v1/keys/999999999");
        Assert.Equal(HttpStatusCode.NotFound, missing.StatusCode);
        Assert.Equal("application/problem+json", missing.Content.Headers.ContentType?.MediaType);
    }

    [Fact]
    public async Task KeyListingsNeverShowSecrets()
    {
        var secret = await api.NewKeyAsync("analyst", "listing check");
        using var admin = api.Client(ApiServer.AdminKey);
        var text = await admin.GetStringAsync("/v1/keys");
        Assert.DoesNotContain(secret, text);
        Assert.Contains(secret[..9], text); // the prefix, to tell keys apart
        Assert.DoesNotContain("\"key\"", text);
    }

    [Theory]
    [InlineData("{\"name\": \"x\", \"role\": \"superuser\"}", "role")]
    [InlineData("{\"name\": \"\", \"role\": \"feeder\"}", "name")]
    public async Task BadKeyRequestsAreValidationProblems(string body, string field)
    {
        using var admin = api.Client(ApiServer.AdminKey);
        var response = await admin.PostAsync("/v1/keys", new StringContent(body, MediaTypeHeaderValue.Parse("application/json")));
        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var problem = await response.Content.ReadFromJsonAsync<JsonElement>();
        Assert.True(problem.GetProperty("errors").TryGetProperty(field, out _));
    }

    [Fact]
    public async Task RevokingAnUnknownKeyIs404()
    {
        using var admin = api.Client(ApiServer.AdminKey);
        Assert.Equal(HttpStatusCode.NotFound, (await admin.PostAsync("/v1/keys/999999/revoke", null)).StatusCode);
    }
}
