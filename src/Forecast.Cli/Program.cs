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
var parsed = root.Parse(args);
if (parsed.Errors.Any(e => ParseMessages.IsTypeError(e.Message)))
{
    // System.CommandLine names the CLR type it expected ("System.Nullable`1[System.Double]"); say "a number".
    foreach (var error in parsed.Errors) Console.Error.WriteLine(ParseMessages.Plain(error.Message));
    var names = new List<string>();
    for (var r = parsed.CommandResult; r is { Command: not RootCommand }; r = r.Parent as System.CommandLine.Parsing.CommandResult)
        names.Insert(0, r.Command.Name);
    Console.Error.WriteLine($"See 'forecast {string.Join(' ', names)} --help'.");
    return 1;
}
return await parsed.InvokeAsync();
