using System.CommandLine;
using Forecast.Storage.Events;
using Forecast.Storage.Keys;

namespace Forecast.Cli;

/// <summary><c>forecast demo</c>: loads the invented demo scenario and issues fresh demo keys.</summary>
static class DemoCommand
{
    const string DemoKeyPrefix = "demo ";

    public static Command Create()
    {
        var connection = DatabaseCommands.ConnectionOption();
        var keysFile = new Option<FileInfo?>("--keys-file") { Description = "also write the demo keys to this file" };
        var command = new Command("demo",
            "Load the invented demo scenario and print one fresh demo key per role (older demo keys are revoked)")
        {
            connection, keysFile,
        };
        command.SetAction((parse, ct) => CliException.GuardAsync(async () =>
        {
            await using var db = DatabaseCommands.DataSource(parse, connection);
            var keys = new ApiKeyStore(db);
            foreach (var old in (await keys.ListAsync(ct)).Where(k => k.Name.StartsWith(DemoKeyPrefix, StringComparison.Ordinal)
                         && k.RevokedAt is null))
            {
                await keys.RevokeAsync(old.Id, ct);
            }
            var lines = new List<string>();
            foreach (var role in Enum.GetValues<Role>())
            {
                var name = ApiKeyStore.RoleName(role);
                var created = await keys.CreateAsync(DemoKeyPrefix + name, role, ct);
                lines.Add($"{name,-8} {created.Secret}");
            }

            var events = DemoScenario.Events();
            var summary = await new EventStore(db).UpsertAsync(events, keyId: null, ct);
            Console.WriteLine($"demo scenario: {summary.Total} events ({summary.Created} new, " +
                              $"{summary.Revised} revised, {summary.Unchanged} unchanged)");
            if (parse.GetValue(keysFile) is { } file) await File.WriteAllLinesAsync(file.FullName, lines, ct);
            else lines.ForEach(Console.WriteLine);
            return 0;
        }));
        return command;
    }
}
