using BenchmarkDotNet.Attributes;
using Forecast.Core.Forecasting;
using Forecast.Core.Omori;
using Forecast.Core.Simulation;

namespace Forecast.Benchmarks;

/// <summary>
/// <see cref="ForecastEngine.Run"/> end to end on a seeded simulated sequence: Mc (maximum curvature and goodness of
/// fit), fit start, b, Omori-Utsu fit, posterior and the default table (4 windows x 5 thresholds for Mm 7).
/// Goals (issue 3): 20,000 events within 50 ms median, 100,000 within 250 ms, memory linear in N, without the Mc
/// bootstrap; <see cref="RunWithMcBootstrap"/> shows what the default
/// <see cref="ForecastRequest.BootstrapSamples"/> (100 resamples) adds.
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
public class EngineBenchmarks
{
    ForecastRequest request = null!, withBootstrap = null!;

    [Params(1_000, 20_000, 100_000)]
    public int Events { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var origin = new DateTime(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        const double mm = 7.0, mc = 2.5, c = 0.05, p = 1.08, tDays = 30;
        double k = Events / OmoriUtsu.Integral(c, p, 0, tDays);   // expected aftershock count = Events
        var spec = new SimulatedSequenceSpec(mm, origin, k, c, p, 1.0, mc, 0, tDays);
        var catalog = new SequenceSimulator(42).Simulate(spec);
        withBootstrap = new ForecastRequest { Mainshock = catalog[0], Events = catalog, IssueTimeUtc = origin.AddDays(tDays) };
        request = withBootstrap with { BootstrapSamples = 0 };
    }

    [Benchmark(Baseline = true)]
    public ForecastResult FitAndDefaultTable() => ForecastEngine.Run(request);

    [Benchmark]
    public ForecastResult RunWithMcBootstrap() => ForecastEngine.Run(withBootstrap);   // default BootstrapSamples (100)
}
