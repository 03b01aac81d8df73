namespace Forecast.Plots.Tests;

/// <summary>Files a reader of the test run may want to look at, in $FORECAST_TEST_ARTIFACTS (script/test sets it)
/// or else TestResults/artifacts under the working directory.</summary>
public static class Artifacts
{
    public static string Folder
    {
        get
        {
            var dir = Environment.GetEnvironmentVariable("FORECAST_TEST_ARTIFACTS");
            if (string.IsNullOrWhiteSpace(dir)) dir = Path.Combine(Directory.GetCurrentDirectory(), "TestResults", "artifacts");
            Directory.CreateDirectory(dir);
            return dir;
        }
    }

    public static void Save(string name, string text) => File.WriteAllText(Path.Combine(Folder, name), text);
}
