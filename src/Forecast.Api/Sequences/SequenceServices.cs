using System.ComponentModel.DataAnnotations;
using Forecast.Api.Workers;
using Forecast.Storage.Forecasts;
using Forecast.Storage.Sequences;
using Microsoft.Extensions.Options;

namespace Forecast.Api.Sequences;

/// <summary>Section <c>Sequences</c>: when a sequence opens on its own and how its zone is drawn.</summary>
public sealed class SequenceOptions
{
    public const string Section = "Sequences";

    /// <summary>An accepted event at or above this magnitude outside every active zone opens a sequence.</summary>
    [Range(2.0, 10.0)] public double TriggerMagnitude { get; init; } = 5.0;

    /// <summary>Zone radius in Wells &amp; Coppersmith (1994) rupture lengths (default 1; see AftershockZone).</summary>
    [Range(0.1, 20.0)] public double ZoneMultiple { get; init; } = Core.Zone.AftershockZone.DefaultMultiple;

    /// <summary>Smallest zone radius in km (default 10; see AftershockZone).</summary>
    [Range(0.0, 1000.0)] public double ZoneFloorKm { get; init; } = Core.Zone.AftershockZone.DefaultFloorKm;

    /// <summary>Events in the zone up to this many days before the mainshock are foreshocks (default 7).</summary>
    [Range(0.0, 365.0)] public double ForeshockDays { get; init; } = 7;

    /// <summary>Generic parameter set used as prior unless a sequence names another.</summary>
    [Required] public string ParameterSet { get; init; } = "rj1989-generic";
}

/// <summary>Section <c>Forecasts</c>: advisory wording and engine settings.</summary>
public sealed class ForecastOptions
{
    public const string Section = "Forecasts";

    /// <summary>The official agency every advisory defers to, e.g. "the National Seismic Service".</summary>
    [Required, MinLength(3)] public string AgencyName { get; init; } = "the national geological survey";

    [Range(0, 10_000)] public int BootstrapSamples { get; init; } = 50;

    public int Seed { get; init; } = 1;

    /// <summary>Years of the zone's catalog before a sequence used for its background rate (when none is set).</summary>
    [Range(0.1, 200.0)] public double BackgroundYears { get; init; } = 10;

    /// <summary>Magnitude from which that catalog is counted (it should be complete above it).</summary>
    [Range(-2.0, 10.0)] public double BackgroundMinMagnitude { get; init; } = 3.0;

    /// <summary>Fewer independent events than this: no background comparison.</summary>
    [Range(1, 100_000)] public int BackgroundMinEvents { get; init; } = 10;
}

public static class SequenceServices
{
    /// <summary>Options, stores and services of sequences and forecasts, and the refit worker.</summary>
    public static IServiceCollection AddSequencesAndForecasts(this IServiceCollection services)
    {
        services.AddOptions<SequenceOptions>().BindConfiguration(SequenceOptions.Section)
            .ValidateDataAnnotations()
            .Validate(o => Core.ReasenbergJones.GenericParameterSets.TryGet(o.ParameterSet, out _),
                "Sequences:ParameterSet must name a known generic parameter set.")
            .ValidateOnStart();
        services.AddOptions<ForecastOptions>().BindConfiguration(ForecastOptions.Section)
            .ValidateDataAnnotations().ValidateOnStart();
        services.AddOptions<RefitWorkerOptions>().BindConfiguration(RefitWorkerOptions.Section)
            .ValidateDataAnnotations().ValidateOnStart();

        services.AddSingleton(sp =>
        {
            var o = sp.GetRequiredService<IOptions<SequenceOptions>>().Value;
            return new SequenceSettings
            {
                TriggerMagnitude = o.TriggerMagnitude, ZoneMultiple = o.ZoneMultiple, ZoneFloorKm = o.ZoneFloorKm,
                ForeshockDays = o.ForeshockDays, ParameterSet = o.ParameterSet,
            };
        });
        services.AddSingleton(sp =>
        {
            var o = sp.GetRequiredService<IOptions<ForecastOptions>>().Value;
            return new ForecastSettings
            {
                AgencyName = o.AgencyName, BootstrapSamples = o.BootstrapSamples, Seed = o.Seed,
                BackgroundYears = o.BackgroundYears, BackgroundMinMagnitude = o.BackgroundMinMagnitude,
                BackgroundMinEvents = o.BackgroundMinEvents,
            };
        });
        services.AddSingleton<SequenceStore>();
        services.AddSingleton<RefitQueue>();
        services.AddSingleton<ForecastStore>();
        services.AddSingleton<ForecastService>();
        services.AddSingleton<RefitProcessor>();
        services.AddHostedService<RefitWorker>();
        return services;
    }
}
