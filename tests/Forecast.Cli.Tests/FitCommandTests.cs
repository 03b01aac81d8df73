using System.Text.Json;

namespace Forecast.Cli.Tests;

public sealed class FitCommandTests : IDisposable
{
    readonly string _dir = Directory.CreateTempSubdirectory("forecast-cli-").FullName;

    public void Dispose() => Directory.Delete(_dir, recursive: true);

    string Simulated(int seed = 3, double days = 10)
    {
        var path = Path.Combine(_dir, $"sim-{seed}.csv");
        var run = CliRunner.Forecast("simulate", "--seed", $"{seed}", "--days", $"{days}", "--output", path);
        Assert.Equal(0, run.ExitCode);
        return path;
    }

    /// <summary>Writes <paramref name="content"/> as a catalog file in the test's folder and returns its path.</summary>
    string Catalog(string name, string content)
    {
        var path = Path.Combine(_dir, name);
        File.WriteAllText(path, content);
        return path;
    }

    [Fact]
    public void SimulateIsReproducibleForASeed()
    {
        var first = File.ReadAllText(Simulated(seed: 5));
        File.Delete(Path.Combine(_dir, "sim-5.csv"));
        Assert.Equal(first, File.ReadAllText(Simulated(seed: 5)));
        Assert.StartsWith("id,time,latitude,longitude,depth_km,magnitude", first);
    }

    [Fact]
    public void FitPrintsTheWholeForecastAsJson()
    {
        var run = CliRunner.Forecast("fit", Simulated(), "--bootstrap", "10");
        Assert.Equal(0, run.ExitCode);
        var json = JsonDocument.Parse(run.Stdout).RootElement;
        Assert.Equal("sim-000000", json.GetProperty("mainshockId").GetString());
        Assert.Equal(24, json.GetProperty("table").GetArrayLength()); // 4 windows x 6 thresholds
        foreach (var section in new[] { "completeness", "bValue", "omori", "posterior", "prior" })
            Assert.Equal(JsonValueKind.Object, json.GetProperty(section).ValueKind);
    }

    [Fact]
    public void FitHonoursMcFitWindowAndIssueTime()
    {
        var run = CliRunner.Forecast("fit", Simulated(), "--mc", "3.0", "--fit-start", "0.5",
            "--fit-end", "2026-01-20T04:20:00Z", "--at", "2026-01-21T04:20:00Z", "--bootstrap", "0");
        Assert.Equal(0, run.ExitCode);
        var json = JsonDocument.Parse(run.Stdout).RootElement;
        Assert.Equal(3.0, json.GetProperty("completeness").GetProperty("mc").GetDouble());
        Assert.Equal(0.5, json.GetProperty("fitStartDays").GetDouble());
        Assert.Equal(5.0, json.GetProperty("fitEndDays").GetDouble(), 1e-9); // 20th minus the 15th, 04:20 both
        Assert.Equal(6.0, json.GetProperty("issueDays").GetDouble(), 1e-9);
    }

    [Fact]
    public void TheTableFormatIsReadable()
    {
        var run = CliRunner.Forecast("fit", Simulated(), "--format", "table", "--bootstrap", "0");
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("Omori-Utsu", run.Stdout);
        Assert.Contains("P(>=1)", run.Stdout);
        Assert.Contains("b-value", run.Stdout);
    }

    [Fact]
    public void ATableIssuedBeforeTheFitStartSaysThereIsNoFitWindowYet()
    {
        // Ten minutes after the mainshock, before the default fit start of 0.01 days (Helmstetter et al. 2006),
        // no event can be fitted: the forecast rests on the generic prior alone, and the table says so.
        var path = Catalog("early.csv", """
            id,time,lat,lon,depth,mag
            m1,2026-02-01T00:00:00Z,1.0,2.0,10,6.0
            a1,2026-02-01T00:10:00Z,1.1,2.1,8,3.1
            """);
        var run = CliRunner.Forecast("fit", path, "--format", "table", "--bootstrap", "0");
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("Fit window    none yet: the issue time, 0.0069 days, is before the fit start, 0.01 days", run.Stdout);
        Assert.Contains("the forecast is the generic prior's", run.Stdout);
    }

    [Theory]
    [InlineData("fit", "--mc", "abc", "Cannot parse argument 'abc' for option '--mc' as a number (for example 2.5).", "See 'forecast fit --help'.")]
    [InlineData("simulate", "--seed", "x", "Cannot parse argument 'x' for option '--seed' as a whole number (for example 3).", "See 'forecast simulate --help'.")]
    public void AnOptionThatIsNotANumberIsNamedInPlainWords(string command, string option, string value, string message, string help)
    {
        var run = command == "fit"
            ? CliRunner.Forecast(command, option, value, Simulated())
            : CliRunner.Forecast(command, option, value);
        Assert.Equal(1, run.ExitCode);
        Assert.Equal([message, help], run.Stderr.Trim().Split('\n').Select(l => l.TrimEnd('\r')));
        Assert.DoesNotContain("System.", run.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void HeaderSynonymsAreMatchedWithoutRegardToCase()
    {
        var path = Catalog("synonyms.csv", """
            EVENT_ID,Origin_Time,Latitude,LONGITUDE,Depth_Km,Magnitude
            m1,2026-02-01T00:00:00Z,1.0,2.0,10,6.0
            a1,2026-02-01T01:00:00Z,1.1,2.1,8,3.5
            a2,2026-02-01T05:00:00,1.0,2.2,9,4.1
            """);
        var run = CliRunner.Forecast("fit", path, "--bootstrap", "0");
        Assert.Equal(0, run.ExitCode);
        var json = JsonDocument.Parse(run.Stdout).RootElement;
        Assert.Equal("m1", json.GetProperty("mainshockId").GetString());
        Assert.Equal(2, json.GetProperty("aftershockCount").GetInt32());
    }

    [Theory]
    [InlineData("when,lat,lon,mag\n2026-01-01T00:00:00Z,1,2,3\n", "time")]
    [InlineData("time,lat,lon,mag\n2026-01-01T00:00:00Z,91,2,3\n", "latitude")]
    [InlineData("time,lat,lon,mag\nnot-a-time,1,2,3\n", "time")]
    public void BadFilesAreReportedInOneLineWithExitCodeOne(string content, string word)
    {
        var path = Catalog("bad.csv", content);
        var run = CliRunner.Forecast("fit", path);
        Assert.Equal(1, run.ExitCode);
        Assert.Contains(word, run.Stderr);
        Assert.DoesNotContain("   at ", run.Stderr); // no stack trace
    }

    [Fact]
    public void AnUnknownMainshockIsReported()
    {
        var run = CliRunner.Forecast("fit", Simulated(), "--mainshock", "nope");
        Assert.Equal(1, run.ExitCode);
        Assert.Contains("nope", run.Stderr);
    }
}
