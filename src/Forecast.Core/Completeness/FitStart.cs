namespace Forecast.Core.Completeness;

/// <summary>When after a mainshock a fit with a fixed Mc may start, given short-term incompleteness.</summary>
/// <remarks>Helmstetter, Kagan &amp; Jackson (2006), BSSA 96, 90-106: small events are lost in the coda of larger
/// ones, and the completeness magnitude t days after a mainshock of magnitude Mm is about
/// <c>Mc(t) = Mm - 4.5 - 0.75 log10(t)</c> (coefficients from memory, fitted to southern California).</remarks>
public static class FitStart
{
    /// <summary>Days after the mainshock from which <paramref name="mc"/> holds:
    /// <c>S = 10^((Mm - 4.5 - Mc) / 0.75)</c>, the inverse of <see cref="McAfterMainshock"/>.</summary>
    /// <remarks>No floor or ceiling is applied (project choice: the caller knows its data window). The value is
    /// under one day for <c>Mc &gt; Mm - 4.5</c> and can be years for a great earthquake with a low Mc
    /// (Mm 9, Mc 2: about 2154 days), which says the fixed-Mc fit is not usable, not that the caller should
    /// wait.</remarks>
    /// <exception cref="ArgumentException">A magnitude is not finite.</exception>
    public static double Helmstetter2006(double mainshockMagnitude, double mc)
    {
        Catalog.Guard.Finite(mainshockMagnitude, nameof(mainshockMagnitude));
        Catalog.Guard.Finite(mc, nameof(mc));
        return Math.Pow(10, (mainshockMagnitude - 4.5 - mc) / 0.75);
    }

    /// <summary>Completeness magnitude <paramref name="tDays"/> after the mainshock,
    /// <c>Mc(t) = Mm - 4.5 - 0.75 log10(t)</c> (Helmstetter, Kagan &amp; Jackson 2006).</summary>
    /// <exception cref="ArgumentException">A non-finite magnitude or a time not above zero.</exception>
    public static double McAfterMainshock(double mainshockMagnitude, double tDays)
    {
        Catalog.Guard.Finite(mainshockMagnitude, nameof(mainshockMagnitude));
        Catalog.Guard.Positive(tDays, nameof(tDays));
        return mainshockMagnitude - 4.5 - 0.75 * Math.Log10(tDays);
    }
}
