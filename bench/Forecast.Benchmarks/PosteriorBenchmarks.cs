using BenchmarkDotNet.Attributes;
using Forecast.Core.Forecasting;
using Forecast.Core.Omori;
using Forecast.Core.Posterior;
using Forecast.Core.ReasenbergJones;
using Forecast.Core.Simulation;

namespace Forecast.Benchmarks;

/// <summary>
/// The forecast engine end to end: Omori-Utsu fit, posterior over (a, b, p, c), default forecast table
/// (4 windows x 5-6 thresholds). Goals: 20,000 events within 50 ms median, 100,000 within 250 ms, memory linear in N.
/// </summary>
[MemoryDiagnoser]
[MedianColumn]
public class PosteriorBenchmarks
{
    AftershockData data = null!;

    [Params(1_000, 20_000, 100_000)]
    public int Events { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var origin = new DateTime(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        const double mm = 7.0, mc = 2.5, tDays = 30;
        double k = Events / OmoriUtsu.Integral(0.05, 1.08, 0, tDays);   // expected count = Events
        var spec = new SimulatedSequenceSpec(mm, origin, k, 0.05, 1.08, 1.0, mc, 0, tDays);
        var catalog = new SequenceSimulator(42).Simulate(spec);
        data = AftershockData.FromCatalog(catalog.Skip(1), origin, mm, mc, 0.1, 0, tDays);
    }

    [Benchmark]
    public OmoriFit OmoriFit() => OmoriUtsu.Fit(data.TimesDays, data.SDays, data.TDays);

    [Benchmark]
    public PosteriorResult Posterior() => RjPosterior.Compute(GenericParameterSets.ReasenbergJones1989, data);

    [Benchmark]
    public ForecastTable FitPosteriorAndDefaultTable()
    {
        var posterior = RjPosterior.Compute(GenericParameterSets.ReasenbergJones1989, data);
        return ForecastTableBuilder.Build(posterior, ForecastTableBuilder.DefaultWindows(data.TDays),
            ForecastTableBuilder.DefaultThresholds(data.MainshockMagnitude));
    }
}
