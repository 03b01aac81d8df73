using System.Net.Http.Json;
using System.Text.Json;
using Forecast.Core.Advisory;
using PuppeteerSharp;

namespace Forecast.Api.Tests.Dashboard;

/// <summary>The dashboard pages in real headless Chromium against the real API and PostgreSQL.</summary>
public class DashboardPageTests(DashboardFixture fx) : IClassFixture<DashboardFixture>
{
    static readonly TimeSpan Wait = TimeSpan.FromSeconds(60);

    static WaitForFunctionOptions Within => new() { Timeout = (int)Wait.TotalMilliseconds, PollingInterval = 100 };

    /// <summary>Every visible text node's colour against its nearest opaque background, by the WCAG 2.1
    /// relative-luminance contrast ratio (success criterion 1.4.3 asks for 4.5:1 for normal text).</summary>
    const string ContrastScript = """
        () => {
          const lin = v => { v /= 255; return v <= 0.03928 ? v / 12.92 : Math.pow((v + 0.055) / 1.055, 2.4); };
          const lum = ([r, g, b]) => 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
          const parse = s => {
            const m = s.match(/rgba?\(([^)]+)\)/);
            if (!m) return null;
            const p = m[1].split(/[ ,\/]+/).filter(Boolean).map(Number);
            return { rgb: p.slice(0, 3), a: p.length > 3 ? p[3] : 1 };
          };
          const background = el => {
            for (let e = el; e; e = e.parentElement) {
              const c = parse(getComputedStyle(e).backgroundColor);
              if (c && c.a >= 0.99) return c.rgb;
            }
            return [255, 255, 255];
          };
          const bad = [];
          let checked = 0;
          const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
          while (walker.nextNode()) {
            const node = walker.currentNode;
            const el = node.parentElement;
            if (!node.textContent.trim() || !el.checkVisibility()) continue;
            const fg = parse(getComputedStyle(el).color).rgb;
            const bg = background(el);
            const [hi, lo] = [lum(fg), lum(bg)].sort((a, b) => b - a);
            const ratio = (hi + 0.05) / (lo + 0.05);
            checked++;
            const text = node.textContent.trim().slice(0, 40);
            if (ratio < 4.5) bad.push(`${ratio.toFixed(2)}: "${text}" ${getComputedStyle(el).color} on ${bg}`);
          }
          return { checked, bad };
        }
        """;

    const string PlotsLoaded = "() => { const imgs = [...document.querySelectorAll('#plots img')]; " +
                               "return imgs.length === 6 && imgs.every(i => i.complete && i.naturalWidth > 0); }";

    sealed record Contrast(int Checked, string[] Bad);

    static void NoErrors(List<string> errors)
    {
        lock (errors) Assert.True(errors.Count == 0, string.Join("\n", errors));
    }

    async Task<JsonElement> PublicForecastAsync(long id)
    {
        using var anonymous = fx.Api.Client();
        return await anonymous.GetFromJsonAsync<JsonElement>($"/v1/public/sequences/{id}/forecast");
    }

    static async Task AssertTableMatchesAsync(IPage page, JsonElement table)
    {
        var rows = await page.EvaluateExpressionAsync<string[][]>(
            "[...document.querySelectorAll('#forecast-table tbody tr')].map(r => [r.dataset.t1, r.dataset.t2, " +
            "r.dataset.minMagnitude, " +
            "r.querySelector('.prob').textContent, r.querySelector('.expected').textContent])");
        var cells = table.EnumerateArray().ToList();
        Assert.Equal(cells.Count, rows.Length);
        foreach (var cell in cells)
        {
            var t1 = cell.GetProperty("t1Days").GetDouble();
            var t2 = cell.GetProperty("t2Days").GetDouble();
            var m = cell.GetProperty("minMagnitude").GetDouble();
            var row = rows.Single(r => Math.Abs(double.Parse(
                r[0], System.Globalization.CultureInfo.InvariantCulture) - t1) < 1e-9
                && Math.Abs(double.Parse(r[1], System.Globalization.CultureInfo.InvariantCulture) - t2) < 1e-9
                && Math.Abs(double.Parse(r[2], System.Globalization.CultureInfo.InvariantCulture) - m) < 1e-9);
            var p = cell.GetProperty("probability").GetDouble();
            // The number and its IPCC AR5 word (Mastrandrea et al. 2010) side by side.
            Assert.Equal($"{LikelihoodWords.Percent(p)} ({LikelihoodWords.For(p)})", row[3]);
            Assert.Contains(
                $"95 % range {cell.GetProperty("low95").GetInt64()} to " +
                $"{cell.GetProperty("high95").GetInt64()}", row[4]);
        }
    }

    [Fact]
    public async Task ThePublicPageShowsTheReleasedForecastWithTheApisNumbersTheCautionsAndTheExerciseMarker()
    {
        var (page, errors) = await fx.NewPageAsync();
        await using var _ = page;
        await page.GoToAsync(fx.Url($"/dashboard/?sequence={fx.MainId}&poll=2"), WaitUntilNavigation.Networkidle0);
        await page.WaitForFunctionAsync("() => !document.getElementById('forecast').hidden", Within);
        await page.WaitForFunctionAsync(PlotsLoaded, Within);

        var api = await PublicForecastAsync(fx.MainId);
        Assert.Equal(api.GetProperty("number").GetInt32().ToString(System.Globalization.CultureInfo.InvariantCulture),
            await page.EvaluateExpressionAsync<string>("document.getElementById('forecast-number').textContent"));
        Assert.Equal(
            "released", await page.EvaluateExpressionAsync<string>("document.getElementById('state-badge').textContent"));
        await AssertTableMatchesAsync(page, api.GetProperty("table"));

        var cautions = await page.EvaluateExpressionAsync<string[]>("[...document.querySelectorAll('#caution-list " +
            "li')].map(l => l.textContent)");
        Assert.Equal(AdvisoryBuilder.Cautions("the Test Seismic Service"), cautions);
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.querySelector('.cautions').checkVisibility()"));
        Assert.Equal(
            "the Test Seismic Service",
            await page.EvaluateExpressionAsync<string>("document.getElementById('agency').textContent"));
        var banner = await page.EvaluateExpressionAsync<string>("document.getElementById('exercise-banner').checkVisibility() ? document.getElementById('exercise-banner').textContent : ''");
        Assert.Contains(AdvisoryBuilder.ExerciseMarker, banner);
        Assert.Contains(
            AdvisoryBuilder.ExerciseMarker,
            await page.EvaluateExpressionAsync<string>("document.getElementById('advisory').textContent"));
        var plots = await page.EvaluateExpressionAsync<string[][]>(
            "[...document.querySelectorAll('#plots figure')].map(f => [f.querySelector('figcaption').textContent, " +
            "f.querySelector('img').alt])");
        Assert.Equal(6, plots.Length);
        Assert.All(plots, p => Assert.StartsWith("EXERCISE: ", p[0]));
        Assert.All(plots, p => Assert.True(p[1].Length > 60, $"alt text of {p[0]}: '{p[1]}'"));

        await Artifacts.ScreenshotAsync(page, "public-desktop");
        NoErrors(errors);
    }

    [Fact]
    public async Task ThePublicPageFitsAPhoneWidthWithLabelledCellsAndEnoughContrast()
    {
        var (page, errors) = await fx.NewPageAsync(390, 844, mobile: true);
        await using var _ = page;
        await page.GoToAsync(fx.Url($"/dashboard/?sequence={fx.MainId}&poll=2"), WaitUntilNavigation.Networkidle0);
        await page.WaitForFunctionAsync("() => !document.getElementById('forecast').hidden", Within);
        await page.WaitForFunctionAsync(PlotsLoaded, Within);

        Assert.True(await page.EvaluateExpressionAsync<bool>("document.documentElement.scrollWidth <= " +
            "window.innerWidth"),
            "the page scrolls sideways at 390 px");
        // Each cell carries its column name when the table is stacked into cards.
        Assert.Equal("\"Chance of at least one: \"", await page.EvaluateExpressionAsync<string>(
            "getComputedStyle(document.querySelector('#forecast-table tbody td.prob'), '::before').content"));
        var widest = await page.EvaluateExpressionAsync<double>("Math.max(...[...document.querySelectorAll('#plots " +
            "img')].map(i => i.getBoundingClientRect().right))");
        Assert.True(widest <= 390, $"a plot reaches {widest} px");
        var contrast = await page.EvaluateFunctionAsync<Contrast>(ContrastScript);
        Assert.True(contrast.Checked > 50, $"only {contrast.Checked} text nodes checked");
        Assert.Empty(contrast.Bad);

        await Artifacts.ScreenshotAsync(page, "public-phone-390");
        NoErrors(errors);
    }

    [Fact]
    public async Task ThePublicPagePollsWithIfNoneMatchAndRedrawsWhenANewerForecastIsReleasedFlaggingItStale()
    {
        var (page, errors) = await fx.NewPageAsync();
        await using var _ = page;
        var statuses = new List<(int Status, bool Conditional)>();
        page.Response += (_, e) =>
        {
            if (e.Response.Url.EndsWith($"/v1/public/sequences/{fx.LiveId}/forecast", StringComparison.Ordinal))
                lock (statuses) statuses.Add((
                    (int)e.Response.Status, e.Response.Request.Headers.ContainsKey("if-none-match")));
        };
        await page.GoToAsync(fx.Url($"/dashboard/?sequence={fx.LiveId}&poll=1"), WaitUntilNavigation.Networkidle0);
        await page.WaitForFunctionAsync("() => !document.getElementById('forecast').hidden", Within);
        var before = await page.EvaluateExpressionAsync<string>("document.getElementById('forecast-number').textContent");
        Assert.False(await page.EvaluateExpressionAsync<bool>("document.getElementById('stale-flag').checkVisibility()"));
        await page.WaitForFunctionAsync(
            "() => /Checked for updates/.test(document.getElementById('checked').textContent)", Within);

        // A hindcast issued three hours ago, at day 2 when the cadence is hourly: stale as soon as it is released.
        using var analyst = fx.Api.Client(fx.AnalystKey);
        var issue = DateTime.UtcNow.AddHours(-3).ToString(
            "yyyy-MM-ddTHH:mm:ssZ", System.Globalization.CultureInfo.InvariantCulture);
        var created = await analyst.PostAsJsonAsync($"/v1/sequences/{fx.LiveId}/forecasts", new { issueTime = issue });
        created.EnsureSuccessStatusCode();
        var n = (await created.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32();
        (await analyst.PostAsync($"/v1/sequences/{fx.LiveId}/forecasts/{n}/release", null)).EnsureSuccessStatusCode();

        await page.WaitForFunctionAsync(
            $"() => document.getElementById('forecast-number').textContent === '{n}'", Within);
        Assert.NotEqual(before, n.ToString(System.Globalization.CultureInfo.InvariantCulture));
        await page.WaitForFunctionAsync("() => document.getElementById('stale-flag').checkVisibility()", Within);
        Assert.StartsWith(
            "STALE: older than its 1 h refresh interval",
            await page.EvaluateExpressionAsync<string>("document.getElementById('stale-flag').textContent"));
        await AssertTableMatchesAsync(page, (await PublicForecastAsync(fx.LiveId)).GetProperty("table"));
        await page.WaitForFunctionAsync(PlotsLoaded, Within);
        Assert.Contains(
            await page.EvaluateExpressionAsync<string>("document.querySelector('#plots img').getAttribute('src')"),
            new[] { $"/v1/public/sequences/{fx.LiveId}/plots/table.svg?v={n}-released" });

        // The page's own code saw the 304s (not only the network).
        Assert.True(await page.EvaluateExpressionAsync<int>("Number(document.body.dataset.notModified ?? 0)") > 0);
        lock (statuses)
        {
            Assert.Contains(statuses, s => s.Status == 304 && s.Conditional);
            Assert.Contains(statuses, s => s.Status == 200 && s.Conditional);
        }
        await Artifacts.ScreenshotAsync(page, "public-stale-after-update");
        NoErrors(errors);
    }

    [Fact]
    public async Task TheAnalystPageTakesTheKeyOnceShowsTheDraftWithDiagnosticsAndReleasesItAfterConfirmation()
    {
        var (page, errors) = await fx.NewPageAsync();
        await using var _ = page;
        using var analyst = fx.Api.Client(fx.AnalystKey);
        var draft = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}/forecasts/latest");
        Assert.Equal("draft", draft.GetProperty("state").GetString());
        var n = draft.GetProperty("number").GetInt32();

        await page.GoToAsync(fx.Url("/dashboard/analyst.html?poll=1"), WaitUntilNavigation.Networkidle0);
        await page.TypeAsync("#key-input", fx.AnalystKey);
        await page.ClickAsync("#key-submit");
        await page.WaitForSelectorAsync(
            $"#sequences a[href^='?sequence={fx.MainId}']", new WaitForSelectorOptions { Timeout = 60_000 });
        Assert.Equal(
            fx.AnalystKey, await page.EvaluateExpressionAsync<string>("sessionStorage.getItem('forecast.analystKey')"));
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.getElementById('key-form').hidden"));
        await Task.WhenAll(
            page.WaitForNavigationAsync(), page.ClickAsync($"#sequences a[href^='?sequence={fx.MainId}']"));
        await page.WaitForFunctionAsync(
            $"() => document.getElementById('forecast-number').textContent === '{n}'", Within);
        await page.WaitForFunctionAsync(
            "() => [...document.querySelectorAll('#plots img')].length === 6 && " +
            "[...document.querySelectorAll('#plots img')].every(i => i.src.startsWith('blob:') && i.complete && " +
            "i.naturalWidth > 0)",
            Within);

        Assert.Equal(
            "draft", await page.EvaluateExpressionAsync<string>("document.getElementById('state-badge').textContent"));
        await AssertTableMatchesAsync(page, draft.GetProperty("result").GetProperty("table"));
        var diagnostics = await page.EvaluateExpressionAsync<string>("document.getElementById('diagnostics').textContent");
        Assert.Contains($"Completeness Mc{draft.GetProperty("mc").GetDouble():0.0}", diagnostics);
        Assert.Contains("Omori-Utsu fit", diagnostics);
        Assert.Contains(
            $"b-value{draft.GetProperty("result").GetProperty("bValue").GetProperty("b").GetDouble():0.00}", diagnostics);
        var contrast = await page.EvaluateFunctionAsync<Contrast>(ContrastScript);
        Assert.Empty(contrast.Bad);
        await Artifacts.ScreenshotAsync(page, "analyst-draft");

        // Cancel first: nothing may change.
        await page.ClickAsync("#release-button");
        await page.WaitForFunctionAsync("() => document.getElementById('confirm-dialog').open", Within);
        Assert.Contains(
            $"forecast {n}",
            await page.EvaluateExpressionAsync<string>("document.getElementById('confirm-title').textContent"),
            StringComparison.OrdinalIgnoreCase);
        await page.ClickAsync("#confirm-no");
        await page.WaitForFunctionAsync(
            "() => /cancelled/.test(document.getElementById('message').textContent)", Within);
        Assert.Equal(
            "draft",
            (await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}/forecasts/{n}")).GetProperty("state").GetString());

        await page.ClickAsync("#release-button");
        await page.WaitForFunctionAsync("() => document.getElementById('confirm-dialog').open", Within);
        await Artifacts.ScreenshotAsync(page, "analyst-release-confirmation");
        await page.ClickAsync("#confirm-yes");
        await page.WaitForFunctionAsync(
            "() => document.getElementById('state-badge').textContent === 'released'", Within);

        var after = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.MainId}/forecasts/{n}");
        Assert.Equal("released", after.GetProperty("state").GetString());
        Assert.Equal(n, (await PublicForecastAsync(fx.MainId)).GetProperty("number").GetInt32());
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.getElementById('release-button').hidden"));
        await Artifacts.ScreenshotAsync(page, "analyst-released");
        NoErrors(errors);
    }

    [Fact]
    public async Task TheSwaggerUiRendersEveryOperationUnderItsContentSecurityPolicy()
    {
        // Chromium reports each blocked script, style, image or fetch as a console error (W3C CSP Level 3, 5.4),
        // so a policy too strict for the page fails here as well as one missing.
        var (page, errors) = await fx.NewPageAsync();
        await using var _ = page;
        var response = await page.GoToAsync(fx.Url("/swagger/index.html"), WaitUntilNavigation.Networkidle0);
        Assert.Equal(Forecast.Api.Dashboard.SecurityHeaders.SwaggerPolicy, response.Headers["content-security-policy"]);
        await page.WaitForFunctionAsync("() => document.querySelectorAll('.opblock').length >= 20", Within);
        Assert.True(await page.EvaluateExpressionAsync<bool>(
            "[...document.querySelectorAll('.opblock-summary-path')].some(e => e.textContent.includes('/v1/events'))"));
        await Artifacts.ScreenshotAsync(page, "swagger-ui");
        NoErrors(errors);
    }

    [Fact]
    public async Task ThePublicListLinksEveryReleasedSequenceMarkedAsAnExercise()
    {
        var (page, errors) = await fx.NewPageAsync();
        await using var _ = page;
        await page.GoToAsync(fx.Url("/dashboard/"), WaitUntilNavigation.Networkidle0);
        await page.WaitForFunctionAsync("() => document.querySelectorAll('#sequences a').length >= 2", Within);
        var links = await page.EvaluateExpressionAsync<string[][]>("[...document.querySelectorAll('#sequences " +
            "a')].map(a => [a.getAttribute('href'), a.textContent])");
        Assert.Contains(links, l => l[0] == $"?sequence={fx.MainId}" && l[1] == "EXERCISE: Simulated drill sequence A");
        Assert.Contains(links, l => l[0] == $"?sequence={fx.LiveId}" && l[1] == "EXERCISE: Simulated drill sequence B");
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.getElementById('exercise-banner').checkVisibility()"));
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.querySelector('.cautions').checkVisibility()"));
        await Artifacts.ScreenshotAsync(page, "public-list");
        NoErrors(errors);
    }

    [Fact]
    public async Task TheAnalystPageWithdrawsADraftWithAReasonAfterConfirmationAndThePublicForecastStays()
    {
        using var analyst = fx.Api.Client(fx.AnalystKey);
        using var anonymous = fx.Api.Client();
        var publicBefore = (await PublicForecastAsync(fx.LiveId)).GetProperty("number").GetInt32();
        var created = await analyst.PostAsJsonAsync($"/v1/sequences/{fx.LiveId}/forecasts", new { });
        created.EnsureSuccessStatusCode();
        var n = (await created.Content.ReadFromJsonAsync<JsonElement>()).GetProperty("number").GetInt32();

        var (page, errors) = await fx.NewPageAsync();
        await using var _ = page;
        await page.GoToAsync(fx.Url("/dashboard/analyst.html"), WaitUntilNavigation.Networkidle0);
        await page.EvaluateExpressionAsync($"sessionStorage.setItem('forecast.analystKey', '{fx.AnalystKey}')");
        // Kept for the tab: a reload goes straight to the sequence, without asking for the key again.
        await page.GoToAsync(
            fx.Url($"/dashboard/analyst.html?sequence={fx.LiveId}&poll=1"), WaitUntilNavigation.Networkidle0);
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.getElementById('key-form').hidden"));
        await page.WaitForFunctionAsync(
            $"() => document.getElementById('forecast-number').textContent === '{n}' && " +
            $"document.getElementById('state-badge').textContent === 'draft'",
            Within);

        await page.ClickAsync("#withdraw-button");
        await page.WaitForFunctionAsync(
            "() => document.getElementById('confirm-dialog').open && !document.getElementById('reason-row').hidden",
            Within);
        await page.TypeAsync("#confirm-reason", "drill: withdrawn from the analyst page");
        await page.ClickAsync("#confirm-yes");
        await page.WaitForFunctionAsync(
            "() => document.getElementById('state-badge').textContent === 'withdrawn'", Within);

        var after = await analyst.GetFromJsonAsync<JsonElement>($"/v1/sequences/{fx.LiveId}/forecasts/{n}");
        Assert.Equal("withdrawn", after.GetProperty("state").GetString());
        Assert.Equal("drill: withdrawn from the analyst page", after.GetProperty("withdrawReason").GetString());
        Assert.Equal(publicBefore, (await PublicForecastAsync(fx.LiveId)).GetProperty("number").GetInt32());
        Assert.True(await page.EvaluateExpressionAsync<bool>("document.getElementById('withdraw-button').hidden"));
        await Artifacts.ScreenshotAsync(page, "analyst-withdrawn");
        NoErrors(errors);
    }
}
