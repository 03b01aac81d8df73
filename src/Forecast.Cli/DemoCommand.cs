using System.CommandLine;
using Forecast.Storage.Events;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Keys;
using Forecast.Storage.Sequences;

namespace Forecast.Cli;

/// <summary><c>forecast demo</c>: loads the invented demo scenario through the service's own stores (events,
/// the sequence, its forecasts: one released and a newer draft) and issues fresh demo keys.</summary>
static class DemoCommand
{
    const string DemoKeyPrefix = "demo ";
    const string DemoAgency = "the Demo Seismic Service (invented)";

    public static Command Create()
    {
        var connection = DatabaseCommands.ConnectionOption();
        var keysFile = new Option<FileInfo?>("--keys-file") { Description = "also write the demo keys to this file" };
        var command = new Command("demo",
            "Load the invented demo scenario (a sequence with a released forecast and a newer draft) and print one " +
            "fresh demo key per role (older demo keys are revoked)")
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

            var stored = await new EventStore(db).FindAsync(DemoScenario.Source, DemoScenario.MainshockId, ct);
            var origin = stored?.OriginTime ?? DemoScenario.FreshOriginUtc(DateTime.UtcNow);
            var events = DemoScenario.Events(origin);
            var summary = await new EventStore(db).UpsertAsync(events, keyId: null, ct);
            Console.WriteLine($"demo scenario: {summary.Total} events ({summary.Created} new, " +
                              $"{summary.Revised} revised, {summary.Unchanged} unchanged)");
            await LoadSequenceAsync(db, origin, ct);

            if (parse.GetValue(keysFile) is { } file) await File.WriteAllLinesAsync(file.FullName, lines, ct);
            else lines.ForEach(Console.WriteLine);
            return 0;
        }));
        return command;
    }

    /// <summary>Declares the demo mainshock, then issues a forecast one day after it (released) and one two days
    /// after it (left as a draft for review). Skipped when the sequence already has a released forecast.</summary>
    static async Task LoadSequenceAsync(Npgsql.NpgsqlDataSource db, DateTime origin, CancellationToken ct)
    {
        var sequences = new SequenceStore(db, new SequenceSettings());
        var forecastStore = new ForecastStore(db);
        var service = new ForecastService(sequences, forecastStore, new ForecastSettings { AgencyName = DemoAgency },
            TimeProvider.System);
        await sequences.ApplySettingsAsync(ct);

        var declared = await sequences.DeclareAsync(DemoScenario.Source, DemoScenario.MainshockId, new SequenceChoices
        {
            Name = $"M {DemoScenario.MainshockMagnitude:0.0} {DemoScenario.RegionName} (invented demo)",
            // An invented background: one independent M >= 4 event in the region every 200 days.
            BackgroundRatePerDay = 0.005, BackgroundMagnitude = 4.0,
            // Invented data: marked as an exercise so no page or feed can present it as a real forecast.
            Exercise = true,
        }, keyId: null, ct);
        var id = declared.SequenceId ?? throw new CliException($"The demo mainshock could not be declared ({declared.Outcome}).");
        // The sequence's own candidates (the mainshock and any large aftershock) open nothing: they are in its zone.
        await sequences.OpenCandidatesAsync(ct);

        if (await forecastStore.LatestAsync(id, releasedOnly: true, ct) is { } existing)
        {
            Console.WriteLine($"demo sequence {id}: already has released forecast {existing.Number}");
            return;
        }
        var now = DateTime.UtcNow;
        DateTime Issue(double days) => origin.AddDays(days) < now ? origin.AddDays(days) : now;
        var released = (await service.ComputeAsync(id, new ComputeOptions { IssueTimeUtc = Issue(1) }, "demo", null,
            skipIfUnchanged: false, ct))!;
        await forecastStore.ReleaseAsync(id, released.Number, editedAdvisory: null, keyId: null, ct);
        var draft = (await service.ComputeAsync(id, new ComputeOptions { IssueTimeUtc = Issue(DemoScenario.Days) }, "demo",
            null, skipIfUnchanged: false, ct))!;
        Console.WriteLine($"demo sequence {id}: forecast {released.Number} released, forecast {draft.Number} a draft " +
                          $"({draft.EventCount} events)");
    }
}
