using System.Diagnostics;

namespace Forecast.Cli.Tests;

/// <summary>Runs the real <c>forecast</c> program (forecast.dll beside the tests) as a child process.</summary>
static class CliRunner
{
    public sealed record Run(int ExitCode, string Stdout, string Stderr);

    public static Run Forecast(params string[] args)
    {
        var dll = Path.Combine(AppContext.BaseDirectory, "forecast.dll");
        var start = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true };
        start.ArgumentList.Add(dll);
        foreach (var a in args) start.ArgumentList.Add(a);
        using var process = Process.Start(start)!;
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(TimeSpan.FromMinutes(2)))
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException("forecast did not finish in 2 minutes");
        }
        return new Run(process.ExitCode, stdout.Result, stderr.Result);
    }
}
