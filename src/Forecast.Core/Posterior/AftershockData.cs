namespace Forecast.Core.Posterior;

/// <summary>The observed sequence that updates a generic prior.</summary>
/// <param name="MainshockMagnitude">Mm.</param>
/// <param name="Mc">Magnitude of completeness; only events <c>M &gt;= Mc</c> are used.</param>
/// <param name="BinWidth">Magnitude bin width dM (0.1 is usual).</param>
/// <param name="SDays">Start of the fit window, days after the mainshock.</param>
/// <param name="TDays">End of the fit window; <c>T &lt;= S</c> means no observation window at all.</param>
/// <param name="TimesDays">Aftershock times, days after the mainshock (any order; those outside [S, T] are ignored).</param>
/// <param name="Magnitudes">Aftershock magnitudes, one per time.</param>
public sealed record AftershockData(
    double MainshockMagnitude, double Mc, double BinWidth, double SDays, double TDays,
    double[] TimesDays, double[] Magnitudes)
{
    /// <summary>No observation at all (T = S = 0): the posterior is exactly the prior.</summary>
    public static AftershockData None(double mainshockMagnitude, double mc, double binWidth = 0.1) =>
        new(mainshockMagnitude, mc, binWidth, 0, 0, [], []);

    /// <summary>Times and magnitudes from catalog events, measured from <paramref name="mainshockTimeUtc"/>.
    /// Events before the mainshock get negative times and are therefore ignored.</summary>
    public static AftershockData FromCatalog(
        IEnumerable<CatalogEvent> aftershocks, DateTime mainshockTimeUtc, double mainshockMagnitude, double mc,
        double binWidth, double sDays, double tDays)
    {
        ArgumentNullException.ThrowIfNull(aftershocks);
        var list = aftershocks.ToList();
        return new AftershockData(mainshockMagnitude, mc, binWidth, sDays, tDays,
            list.Select(e => (e.TimeUtc - mainshockTimeUtc).TotalDays).ToArray(),
            list.Select(e => e.Magnitude).ToArray());
    }

    internal void Validate()
    {
        ArgumentNullException.ThrowIfNull(TimesDays);
        ArgumentNullException.ThrowIfNull(Magnitudes);
        if (TimesDays.Length != Magnitudes.Length)
            throw new ArgumentException($"{TimesDays.Length} times but {Magnitudes.Length} magnitudes.", nameof(Magnitudes));
        if (!double.IsFinite(MainshockMagnitude) || !double.IsFinite(Mc))
            throw new ArgumentException("The mainshock magnitude and Mc must be finite.", nameof(Mc));
        if (!(BinWidth > 0) || double.IsInfinity(BinWidth))
            throw new ArgumentException($"The bin width must be positive, got {BinWidth}.", nameof(BinWidth));
        if (!(SDays >= 0) || !double.IsFinite(SDays) || !double.IsFinite(TDays))
            throw new ArgumentException($"The window [{SDays}, {TDays}] d must be finite with S >= 0.", nameof(SDays));
    }
}
