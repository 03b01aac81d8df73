using System.CommandLine;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;

namespace Forecast.Cli;

/// <summary><c>forecast simulate</c>: a seeded synthetic aftershock catalog as CSV (invented demo data).</summary>
static class SimulateCommand
{
    public static Command Create()
    {
        var seed = new Option<int>("--seed") { Description = "random seed (same seed, same catalog)", DefaultValueFactory = _ => 1 };
        var magnitude = new Option<double>("--magnitude") { Description = "mainshock magnitude", DefaultValueFactory = _ => 6.5 };
        var days = new Option<double>("--days") { Description = "length of the sequence in days", DefaultValueFactory = _ => 30 };
        var mc = new Option<double>("--mc") { Description = "smallest simulated magnitude", DefaultValueFactory = _ => 2.5 };
        var a = new Option<double>("--a") { Description = "Reasenberg-Jones a", DefaultValueFactory = _ => -1.67 };
        var b = new Option<double>("--b") { Description = "Gutenberg-Richter b", DefaultValueFactory = _ => 0.91 };
        var p = new Option<double>("--p") { Description = "Omori-Utsu p", DefaultValueFactory = _ => 1.08 };
        var c = new Option<double>("--c") { Description = "Omori-Utsu c in days", DefaultValueFactory = _ => 0.05 };
        var incomplete = new Option<bool>("--early-incompleteness")
        {
            Description = "drop early small events as Helmstetter et al. (2006) describe",
        };
        var origin = new Option<string>("--origin") { Description = "mainshock time, UTC", DefaultValueFactory = _ => "2026-01-15T04:20:00Z" };
        var output = new Option<FileInfo?>("--output", "-o") { Description = "write here instead of standard output" };
        var command = new Command("simulate", "Write a seeded synthetic aftershock catalog (CSV) for an invented region")
        {
            seed, magnitude, days, mc, a, b, p, c, incomplete, origin, output,
        };
        command.SetAction(parse => CliException.Guard(() =>
        {
            var originUtc = CatalogCsv.ParseTime(parse.GetValue(origin)!)
                ?? throw new CliException("--origin is not a time.");
            var parameters = new RjParameters(parse.GetValue(a), parse.GetValue(b), parse.GetValue(p), parse.GetValue(c));
            var spec = SimulatedSequenceSpec.FromReasenbergJones(parameters, parse.GetValue(magnitude), parse.GetValue(mc),
                originUtc, 0, parse.GetValue(days)) with { EarlyIncompleteness = parse.GetValue(incomplete) };
            var events = new SequenceSimulator(parse.GetValue(seed)).Simulate(spec);
            if (parse.GetValue(output) is { } file)
            {
                using var writer = file.CreateText();
                CatalogCsv.Write(writer, events);
                Console.Error.WriteLine($"{events.Count} events written to {file.FullName}");
            }
            else
            {
                CatalogCsv.Write(Console.Out, events);
            }
            return 0;
        }));
        return command;
    }
}
