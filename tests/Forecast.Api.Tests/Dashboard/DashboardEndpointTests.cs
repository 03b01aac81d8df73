using System.Net;
using System.Net.Http.Headers;
using System.Net.Http.Json;
using System.Text.Json;
using System.Xml;
using System.Xml.Linq;
using Forecast.Api.Dashboard;
using Forecast.Core.Advisory;

namespace Forecast.Api.Tests.Dashboard;

/// <summary>The plot URLs, the dashboard views and the pages' headers over real HTTP.</summary>
public class DashboardEndpointTests(DashboardFixture fx) : IClassFixture<DashboardFixture>
{
    static readonly XNamespace Svg = "http://www.w3.org/2000/svg";
    static readonly string[] Kinds = ["table", "magnitude-time", "cumulative", "map", "frequency-magnitude", "rate"];

    static async Task<(XDocument Doc, JsonElement Data)> SvgAsync(HttpResponseMessage r)
    {
        Assert.Equal(HttpStatusCode.OK, r.StatusCode);
        Assert.Equal("image/svg+xml", r.Content.Headers.ContentType!.MediaType);
        using var reader = XmlReader.Create(
            await r.Content.ReadAsStreamAsync(), new XmlReaderSettings { DtdProcessing = DtdProcessing.Prohibit });
        var doc = XDocument.Load(reader);
        Assert.Equal(Svg + "svg", doc.Root!.Name);
        return (doc, JsonDocument.Parse(doc.Root.Element(Svg + "metadata")!.Value).RootElement.Clone());
    }

    [Fact]
    public async Task EveryPublicPlotIsValidSvgWhoseNumbersAreThoseOfTheApi()
    {
        using var anonymous = fx.Api.Client();
        using var analyst = fx.Api.Client(fx.AnalystKey);
        var released = await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{fx.MainId}/forecast");
        var number = released.GetProperty("number").GetInt32();
        var full = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}/forecasts/{number}");
        var result = full.GetProperty("result");
        var sequence = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}");
        var members = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}/events");
        var aftershocks = members.GetProperty("aftershocks").GetArrayLength();
        var plots = new Dictionary<string, (XDocument Doc, JsonElement Data)>();
        foreach (var kind in Kinds)
        {
            var url = $"/v1/public/sequences/{fx.MainId}/plots/{kind}.svg";
            var (doc, data) = await SvgAsync(await anonymous.GetAsync(url));
            var title = doc.Root!.Element(Svg + "title")!.Value;
            Assert.StartsWith("EXERCISE: ", title);
            Assert.EndsWith($"(forecast {number})", title);
            Assert.False(string.IsNullOrWhiteSpace(doc.Root.Element(Svg + "desc")!.Value));
            plots[kind] = (doc, data);
        }

        var table = result.GetProperty("table").EnumerateArray().ToList();
        var rows = plots["table"].Data.GetProperty("rows").EnumerateArray().ToList();
        Assert.Equal(table.Count, rows.Count);
        foreach (var (row, cell) in rows.Zip(table))
        {
            Assert.Equal(cell.GetProperty("probability").GetDouble(), row.GetProperty("probability").GetDouble());
            Assert.Equal(cell.GetProperty("minMagnitude").GetDouble(), row.GetProperty("minMagnitude").GetDouble());
            var p = cell.GetProperty("probability").GetDouble();
            Assert.Contains(
                plots["table"].Doc.Descendants(Svg + "text"),
                t => t.Value == $"{LikelihoodWords.Percent(p)} ({LikelihoodWords.For(p)})");
        }
        Assert.Equal(fx.MainEventCount, plots["magnitude-time"].Data.GetProperty("eventCount").GetInt32());
        Assert.Equal(
            full.GetProperty("input").GetProperty("eventCount").GetInt32(),
            plots["map"].Data.GetProperty("eventCount").GetInt32());
        Assert.Equal(aftershocks, plots["magnitude-time"].Data.GetProperty("aftershocks").GetInt32());
        Assert.Equal(
            sequence.GetProperty("zone").GetProperty("radiusKm").GetDouble(),
            plots["map"].Data.GetProperty("zoneRadiusKm").GetDouble());
        Assert.Equal(
            full.GetProperty("mc").GetDouble(), plots["frequency-magnitude"].Data.GetProperty("mc").GetDouble());
        Assert.Equal(
            result.GetProperty("bValue").GetProperty("b").GetDouble(),
            plots["frequency-magnitude"].Data.GetProperty("b").GetDouble());
        Assert.Equal(
            full.GetProperty("fitStartDays").GetDouble(),
            plots["cumulative"].Data.GetProperty("fitStartDays").GetDouble());
        Assert.Equal(
            result.GetProperty("posterior").GetProperty("p").GetDouble(),
            plots["cumulative"].Data.GetProperty("p").GetDouble());
        Assert.Equal(
            result.GetProperty("omori").GetProperty("k").GetDouble(),
            plots["rate"].Data.GetProperty("omoriK").GetDouble());
        Assert.Equal(
            result.GetProperty("omori").GetProperty("p").GetDouble(),
            plots["rate"].Data.GetProperty("omoriP").GetDouble());
    }

    [Fact]
    public async Task DraftPlotsNeedAnAnalystKeyAndPublicPlotsShowOnlyReleasedForecasts()
    {
        using var analyst = fx.Api.Client(fx.AnalystKey);
        var created = await analyst.PostAsJsonAsync($"/v1/sequences/{fx.MainId}/forecasts", new { });
        var draft = (await created.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32();
        var url = $"/v1/sequences/{fx.MainId}/forecasts/{draft}/plots/map.svg";
        using var anonymous = fx.Api.Client();
        using var feeder = fx.Api.Client(fx.FeederKey);
        Assert.Equal(HttpStatusCode.Unauthorized, (await anonymous.GetAsync(url)).StatusCode);
        Assert.Equal(HttpStatusCode.Forbidden, (await feeder.GetAsync(url)).StatusCode);
        var (doc, _) = await SvgAsync(await analyst.GetAsync(url));
        Assert.EndsWith($"(forecast {draft})", doc.Root!.Element(Svg + "title")!.Value);

        var view = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}/forecasts/{draft}/dashboard");
        Assert.Equal("draft", view.GetProperty("state").GetString());
        Assert.Equal(JsonValueKind.Object, view.GetProperty("diagnostics").ValueKind);

        // The public view never shows the draft, and has no diagnostics.
        var pub = await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{fx.MainId}/dashboard");
        Assert.Equal("released", pub.GetProperty("state").GetString());
        Assert.NotEqual(draft, pub.GetProperty("number").GetInt32());
        Assert.Equal(JsonValueKind.Null, pub.GetProperty("diagnostics").ValueKind);
        Assert.All(
            pub.GetProperty("plots").EnumerateArray(),
            p => Assert.StartsWith($"/v1/public/sequences/{fx.MainId}/plots/", p.GetProperty("url").GetString()));
        var (pubDoc, _) = await SvgAsync(await anonymous.GetAsync($"/v1/public/sequences/{fx.MainId}/plots/map.svg"));
        Assert.EndsWith(
            $"(forecast {pub.GetProperty("number").GetInt32()})", pubDoc.Root!.Element(Svg + "title")!.Value);

        var pie = await anonymous.GetAsync($"/v1/public/sequences/{fx.MainId}/plots/pie.svg");
        Assert.Equal(HttpStatusCode.NotFound, pie.StatusCode);
        var detail = (await pie.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("detail").GetString()!;
        Assert.StartsWith("No plot 'pie' exists. Known plots: ", detail, StringComparison.Ordinal);
        Assert.Contains("map", detail, StringComparison.Ordinal);
        Assert.Equal(
            HttpStatusCode.NotFound, (await anonymous.GetAsync("/v1/public/sequences/999999/plots/map.svg")).StatusCode);
    }

    [Fact]
    public async Task APlotAnswers304ToItsOwnETag()
    {
        using var anonymous = fx.Api.Client();
        var url = $"/v1/public/sequences/{fx.MainId}/plots/rate.svg";
        var first = await anonymous.GetAsync(url);
        Assert.Equal(HttpStatusCode.OK, first.StatusCode);
        using var again = new HttpRequestMessage(HttpMethod.Get, url);
        again.Headers.IfNoneMatch.Add(first.Headers.ETag!);
        Assert.Equal(HttpStatusCode.NotModified, (await anonymous.SendAsync(again)).StatusCode);
    }

    [Fact]
    public async Task PagesAndPlotsCarrySecurityHeaders()
    {
        using var anonymous = fx.Api.Client();
        foreach (var path in new[] { "/dashboard/", "/dashboard/analyst.html", "/dashboard/common.js" })
        {
            var r = await anonymous.GetAsync(path);
            Assert.Equal(HttpStatusCode.OK, r.StatusCode);
            var csp = string.Join(";", r.Headers.GetValues("Content-Security-Policy"));
            Assert.Contains("script-src 'self'", csp);
            Assert.DoesNotContain("unsafe-inline", csp);
            Assert.Contains("frame-ancestors 'none'", csp);
            Assert.Equal("nosniff", r.Headers.GetValues("X-Content-Type-Options").Single());
            Assert.Equal("no-referrer", r.Headers.GetValues("Referrer-Policy").Single());
        }
        var html = await anonymous.GetStringAsync("/dashboard/");
        // No inline script for the policy to allow: every <script> has a src.
        Assert.DoesNotMatch("<script(?![^>]*\\ssrc=)[^>]*>", html);
        var plot = await anonymous.GetAsync($"/v1/public/sequences/{fx.MainId}/plots/table.svg");
        Assert.Contains("default-src 'none'", string.Join(";", plot.Headers.GetValues("Content-Security-Policy")));
        Assert.Equal("nosniff", plot.Headers.GetValues("X-Content-Type-Options").Single());
        // Routing ignores case, and so do the headers.
        var shouted = await anonymous.GetAsync($"/v1/public/sequences/{fx.MainId}/PLOTS/table.svg");
        Assert.Equal(HttpStatusCode.OK, shouted.StatusCode);
        Assert.Equal(SecurityHeaders.SvgPolicy, shouted.Headers.GetValues("Content-Security-Policy").Single());
        Assert.Equal("nosniff", shouted.Headers.GetValues("X-Content-Type-Options").Single());
        var swagger = await anonymous.GetAsync("/swagger/index.html");
        Assert.Equal(HttpStatusCode.OK, swagger.StatusCode);
        Assert.Equal(SecurityHeaders.SwaggerPolicy, swagger.Headers.GetValues("Content-Security-Policy").Single());
        Assert.Equal("nosniff", swagger.Headers.GetValues("X-Content-Type-Options").Single());
        // Every other answer may load and run nothing, should a browser ever render it.
        foreach (var data in new[] { "/v1/public/sequences", "/health/live", "/v1/no-such-path" })
        {
            var r = await anonymous.GetAsync(data);
            Assert.Equal(SecurityHeaders.DataPolicy, r.Headers.GetValues("Content-Security-Policy").Single());
            Assert.Equal("nosniff", r.Headers.GetValues("X-Content-Type-Options").Single());
            Assert.Equal("no-referrer", r.Headers.GetValues("Referrer-Policy").Single());
        }
        using var noRedirects = new HttpClient(new HttpClientHandler { AllowAutoRedirect = false })
        {
            BaseAddress = fx.Api.BaseAddress,
        };
        var redirect = await noRedirects.GetAsync("/dashboard");
        Assert.True(
            redirect.StatusCode is HttpStatusCode.MovedPermanently or HttpStatusCode.Redirect,
            redirect.StatusCode.ToString());
    }

    [Fact]
    public async Task TheViewsTableCarriesTheWordBesideEveryNumberAndTheFreshnessOfTheForecast()
    {
        using var anonymous = fx.Api.Client();
        var view = await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{fx.MainId}/dashboard");
        foreach (var row in view.GetProperty("table").EnumerateArray())
        {
            var p = row.GetProperty("probability").GetDouble();
            Assert.Equal(LikelihoodWords.Percent(p), row.GetProperty("percent").GetString());
            Assert.Equal(LikelihoodWords.For(p), row.GetProperty("word").GetString());
        }
        Assert.Equal(
            AdvisoryBuilder.Cautions("the Test Seismic Service"),
            view.GetProperty("cautions").EnumerateArray().Select(c => c.GetString()));
        var issue = view.GetProperty("issueTime").GetDateTime();
        // Day 2 of the sequence: the cadence is hourly (RefitSchedule).
        Assert.Equal(issue.AddHours(1), view.GetProperty("freshness").GetProperty("staleAt").GetDateTime());
        Assert.True(view.GetProperty("exercise").GetBoolean());
        Assert.Contains(AdvisoryBuilder.ExerciseMarker, view.GetProperty("notice").GetString());
    }
}

/// <summary>Staleness by the refit cadence, without a server.</summary>
public class DashboardFreshnessTests
{
    [Theory]
    // Hourly to day 3, 6-hourly to day 30, then daily (RefitSchedule); a forecast issued just before a boundary
    // is stale on the longer cadence when the shorter one would end past the boundary.
    [InlineData(2.0, 1.0)]
    [InlineData(2.99, 6.0)]
    [InlineData(10, 6.0)]
    [InlineData(29.9, 24.0)]
    [InlineData(40, 24.0)]
    public void AForecastIsStaleOnceOlderThanTheCadenceThatAppliesThen(double issueDays, double staleAfterHours)
    {
        var main = new DateTime(2026, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        var f = DashboardData.FreshnessOf(main, main.AddDays(issueDays));
        Assert.Equal(staleAfterHours, f.CadenceHours, 1e-9);
    }
}
