using System.CommandLine;
using Forecast.Cli;

var root = new RootCommand("forecast: aftershock forecasting tools (fit a catalog, simulate, manage the database)");
root.Subcommands.Add(FitCommand.Create());
root.Subcommands.Add(SimulateCommand.Create());
root.Subcommands.Add(DatabaseCommands.Migrate());
root.Subcommands.Add(DatabaseCommands.Keys());
root.Subcommands.Add(DemoCommand.Create());
root.Subcommands.Add(BenchCommand.Create());
root.Subcommands.Add(BenchRefitCommand.Create());
root.Subcommands.Add(BenchUploadCommand.Create());
root.Subcommands.Add(BenchPollCommand.Create());
return await root.Parse(args).InvokeAsync();
