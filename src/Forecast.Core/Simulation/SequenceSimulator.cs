using Forecast.Core.Omori;
using MathNet.Numerics.Distributions;

namespace Forecast.Core.Simulation;

/// <summary>
/// Seeded synthetic aftershock sequences: Omori-Utsu times, Gutenberg-Richter magnitudes, invented epicentres.
/// </summary>
/// <remarks>
/// The same seed and spec give the same catalog (System.Random with an explicit seed; never the clock).
/// Times: the count is Poisson with mean <c>K A(c, p)</c> and, given the count, times are independent with density
/// <c>(t + c)^(-p) / A</c> on [S, T] (a Poisson process conditioned on its count), drawn by inverting the
/// integral exactly. Magnitudes: exponential above <c>Mc - dM/2</c> with <c>beta = b ln 10</c> (Aki 1965),
/// reported at bin centres.
/// </remarks>
public sealed class SequenceSimulator(int seed)
{
    /// <summary>Name of the invented location used for every simulated catalog.</summary>
    public const string DemoRegionName = "Demo region";

    readonly Random random = new(seed);

    /// <summary>Simulates a catalog: the mainshock first ("sim-000000"), then aftershocks in time order
    /// ("sim-000001", ...).</summary>
    public IReadOnlyList<CatalogEvent> Simulate(SimulatedSequenceSpec spec)
    {
        ArgumentNullException.ThrowIfNull(spec);
        Check(spec);
        double[] times = OmoriTimes(spec.K, spec.C, spec.P, spec.SDays, spec.TDays);
        double[] magnitudes = Magnitudes(times.Length, spec.B, spec.Mc, spec.BinWidth);
        var events = new List<CatalogEvent>(times.Length + 1)
        {
            new("sim-000000", spec.OriginTimeUtc, spec.Latitude, spec.Longitude, spec.DepthKm, spec.MainshockMagnitude),
        };
        for (int i = 0; i < times.Length; i++)
        {
            var (lat, lon, depth) = Scatter(spec);
            if (spec.EarlyIncompleteness && magnitudes[i] < EarlyCompleteness(spec.MainshockMagnitude, times[i])) continue;
            var time = spec.OriginTimeUtc.AddTicks((long)Math.Round(times[i] * TimeSpan.TicksPerDay));
            events.Add(new CatalogEvent($"sim-{events.Count:D6}", time, lat, lon, depth, magnitudes[i]));
        }
        return events;
    }

    /// <summary>Sorted Omori-Utsu event times on [S, T] (days): Poisson(K A) of them, iid from <c>(t + c)^(-p) / A</c>.</summary>
    public double[] OmoriTimes(double k, double c, double p, double sDays, double tDays)
    {
        if (!(k >= 0) || double.IsInfinity(k)) throw new ArgumentException($"K must be finite and >= 0, got {k}.", nameof(k));
        OmoriUtsu.CheckOmori(c, p);
        OmoriUtsu.CheckWindow(sDays, tDays);
        double mean = k * OmoriUtsu.IntegralUnchecked(c, p, sDays, tDays);
        int count = mean > 0 ? Poisson.Sample(random, mean) : 0;
        var times = new double[count];
        for (int i = 0; i < count; i++) times[i] = InverseCumulative(random.NextDouble(), c, p, sDays, tDays);
        Array.Sort(times);
        return times;
    }

    /// <summary>
    /// <paramref name="count"/> Gutenberg-Richter magnitudes at bin centres <c>Mc, Mc + dM, ...</c>: the continuous
    /// magnitude is <c>Mc - dM/2 + Exponential(b ln 10)</c>, so the bin index is geometric (Tinti &amp; Mulargia 1987).
    /// </summary>
    public double[] Magnitudes(int count, double b, double mc, double binWidth)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        if (!(b > 0) || double.IsInfinity(b)) throw new ArgumentException($"b must be positive and finite, got {b}.", nameof(b));
        if (!(binWidth > 0) || double.IsInfinity(binWidth)) throw new ArgumentException($"The bin width must be positive, got {binWidth}.", nameof(binWidth));
        double beta = b * Math.Log(10);
        var magnitudes = new double[count];
        for (int i = 0; i < count; i++)
        {
            double excess = -Math.Log(1 - random.NextDouble()) / beta;
            double bin = Math.Floor(excess / binWidth);
            magnitudes[i] = Math.Round(mc + bin * binWidth, 10);
        }
        return magnitudes;
    }

    /// <summary>
    /// The time t in [S, T] with <c>integral_S^t (u + c)^(-p) du = q A(c, p)</c>. With
    /// <c>L = ln((T + c)/(S + c))</c> and <c>x = 1 - p</c>: <c>ln((t + c)/(S + c)) = log1p(q expm1(x L)) / x</c>,
    /// and <c>q L</c> at p = 1; stable near p = 1 for the same reason as <see cref="OmoriUtsu.Integral"/>.
    /// </summary>
    public static double InverseCumulative(double q, double c, double p, double sDays, double tDays)
    {
        if (!(q >= 0 && q <= 1)) throw new ArgumentException($"q must be in [0, 1], got {q}.", nameof(q));
        OmoriUtsu.CheckOmori(c, p);
        OmoriUtsu.CheckWindow(sDays, tDays);
        double sc = sDays + c;
        double logRatio = Precise.Log1P((tDays - sDays) / sc);
        double x = 1 - p;
        double u = x * logRatio;
        double logTc;
        if (x == 0) logTc = q * logRatio;
        else if (u > 50) logTc = Math.Log(Math.Exp(x * Math.Log(sc)) + q * (Math.Exp(x * Math.Log(tDays + c)) - Math.Exp(x * Math.Log(sc)))) / x - Math.Log(sc);
        else logTc = Precise.Log1P(q * Precise.Expm1(u)) / x;
        double t = sc * Math.Exp(logTc) - c;
        return Math.Clamp(t, sDays, tDays);
    }

    /// <summary>Early-time completeness after a mainshock, <c>Mm - 4.5 - 0.75 log10 t</c> (Helmstetter et al. 2006).</summary>
    public static double EarlyCompleteness(double mainshockMagnitude, double tDays) =>
        tDays > 0 ? mainshockMagnitude - 4.5 - 0.75 * Math.Log10(tDays) : double.PositiveInfinity;

    (double Lat, double Lon, double DepthKm) Scatter(SimulatedSequenceSpec spec)
    {
        const double kmPerDegree = 6371 * Math.PI / 180;   // sphere of radius 6371 km (common practice)
        double northKm = Normal.Sample(random, 0, spec.ScatterKm);
        double eastKm = Normal.Sample(random, 0, spec.ScatterKm);
        double depth = Math.Abs(Normal.Sample(random, spec.DepthKm, 3));
        double lat = Math.Clamp(spec.Latitude + northKm / kmPerDegree, -90, 90);
        double lon = spec.Longitude + eastKm / (kmPerDegree * Math.Max(0.01, Math.Cos(lat * Math.PI / 180)));
        lon = lon > 180 ? lon - 360 : lon < -180 ? lon + 360 : lon;
        return (lat, lon, depth);
    }

    static void Check(SimulatedSequenceSpec spec)
    {
        if (!double.IsFinite(spec.MainshockMagnitude)) throw new ArgumentException("The mainshock magnitude must be finite.", nameof(spec));
        if (spec.OriginTimeUtc.Kind != DateTimeKind.Utc) throw new ArgumentException("The origin time must be UTC.", nameof(spec));
        if (!double.IsFinite(spec.Mc)) throw new ArgumentException("Mc must be finite.", nameof(spec));
        if (!(spec.ScatterKm >= 0)) throw new ArgumentException($"ScatterKm must be >= 0, got {spec.ScatterKm}.", nameof(spec));
        if (!(spec.Latitude is >= -90 and <= 90) || !(spec.Longitude is >= -180 and <= 180))
            throw new ArgumentException("The mainshock location must be a valid latitude and longitude.", nameof(spec));
    }
}
