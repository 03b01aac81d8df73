using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Simulation;

/// <summary>What to simulate: an Omori-Utsu sequence of events <c>M &gt;= Mc</c> with Gutenberg-Richter magnitudes.</summary>
/// <param name="MainshockMagnitude">Mm.</param>
/// <param name="OriginTimeUtc">Mainshock origin time (UTC); event times are counted from it.</param>
/// <param name="K">Omori productivity per day for events <c>M &gt;= Mc</c>.</param>
/// <param name="C">Omori c in days.</param>
/// <param name="P">Omori p.</param>
/// <param name="B">Gutenberg-Richter b-value.</param>
/// <param name="Mc">Magnitude of completeness: the lowest bin centre simulated.</param>
/// <param name="SDays">Start of the simulated window, days after the mainshock.</param>
/// <param name="TDays">End of the simulated window, days after the mainshock.</param>
public sealed record SimulatedSequenceSpec(
    double MainshockMagnitude, DateTime OriginTimeUtc, double K, double C, double P, double B, double Mc,
    double SDays, double TDays)
{
    /// <summary>Magnitude bin width (0.1 is usual).</summary>
    public double BinWidth { get; init; } = 0.1;

    /// <summary>
    /// Drop events below the early-time completeness <c>Mc(t) = Mm - 4.5 - 0.75 log10 t</c>
    /// of Helmstetter, Kagan &amp; Jackson (2006), BSSA 96, 90-106 (from memory).
    /// </summary>
    public bool EarlyIncompleteness { get; init; }

    /// <summary>Standard deviation of each horizontal epicentre offset from the mainshock, km.</summary>
    public double ScatterKm { get; init; } = 10;

    /// <summary>Mainshock latitude: by default the invented "Demo region" at 0 N, 0 E (open ocean).</summary>
    public double Latitude { get; init; }

    /// <summary>Mainshock longitude, degrees east.</summary>
    public double Longitude { get; init; }

    /// <summary>Mainshock depth, km; aftershock depths scatter around it by 3 km.</summary>
    public double DepthKm { get; init; } = 10;

    /// <summary>The spec whose K matches Reasenberg-Jones parameters: <c>K = 10^(a + b (Mm - Mc))</c>.</summary>
    public static SimulatedSequenceSpec FromReasenbergJones(
        RjParameters parameters, double mainshockMagnitude, double mc, DateTime originTimeUtc, double sDays, double tDays)
    {
        ArgumentNullException.ThrowIfNull(parameters);
        double k = ReasenbergJones.ReasenbergJones.KFromA(parameters.A, parameters.B, mainshockMagnitude, mc);
        return new SimulatedSequenceSpec(mainshockMagnitude, originTimeUtc, k, parameters.C, parameters.P, parameters.B, mc, sDays, tDays);
    }
}
