namespace Forecast.Core.Omori;

/// <summary>Outcome of an Omori-Utsu maximum-likelihood fit.</summary>
public enum OmoriFitStatus
{
    /// <summary>Interior optimum; the score is zero and the observed information is positive definite.</summary>
    Converged,
    /// <summary>Fewer events in [S, T] than <see cref="OmoriFitOptions.MinEvents"/>; no parameters are estimated.</summary>
    TooFewEvents,
    /// <summary>The best c lies on a bound of the search range: c is not resolved by these data.</summary>
    CAtBound,
    /// <summary>The best p lies on a bound of the search range.</summary>
    PAtBound,
    /// <summary>The optimiser stopped where the score is not zero or the information is not positive definite.</summary>
    DidNotConverge,
}

/// <summary>Search ranges and thresholds of the Omori-Utsu fit.</summary>
/// <param name="MinC">Lower bound of c in days. 1e-5 d (about a second) is a project choice.</param>
/// <param name="MaxC">Upper bound of c in days (project choice).</param>
/// <param name="MinP">Lower bound of p (project choice; published sequences fall well inside 0.2-3).</param>
/// <param name="MaxP">Upper bound of p (project choice).</param>
/// <param name="MinEvents">Fewest events for a fit; three parameters from fewer than five times is guesswork
/// (project choice).</param>
public sealed record OmoriFitOptions(
    double MinC = 1e-5, double MaxC = 10, double MinP = 0.2, double MaxP = 3, int MinEvents = 5);

/// <summary>
/// Maximum-likelihood Omori-Utsu parameters with their uncertainty from the observed information.
/// </summary>
/// <param name="Status">Whether the fit can be used; see <see cref="OmoriFitStatus"/>.</param>
/// <param name="Message">Plain-language account of the status.</param>
/// <param name="EventCount">Number of times inside [S, T].</param>
/// <param name="SDays">Start of the fit window, days after the mainshock.</param>
/// <param name="TDays">End of the fit window, days after the mainshock.</param>
/// <param name="K">Productivity per day (NaN when not estimated).</param>
/// <param name="C">c in days (NaN when not estimated).</param>
/// <param name="P">Decay exponent p (NaN when not estimated).</param>
/// <param name="LogLikelihood">Maximised log-likelihood (NaN when not estimated).</param>
/// <param name="Covariance">3 x 3 covariance of (log10 K, log10 c, p), the inverse observed information;
/// null unless the information is positive definite.</param>
public sealed record OmoriFit(
    OmoriFitStatus Status,
    string Message,
    int EventCount,
    double SDays,
    double TDays,
    double K,
    double C,
    double P,
    double LogLikelihood,
    double[,]? Covariance)
{
    /// <summary>Standard error of log10 K (NaN without a covariance).</summary>
    public double SigmaLog10K => Covariance is null ? double.NaN : Math.Sqrt(Covariance[0, 0]);

    /// <summary>Standard error of log10 c (NaN without a covariance).</summary>
    public double SigmaLog10C => Covariance is null ? double.NaN : Math.Sqrt(Covariance[1, 1]);

    /// <summary>Standard error of p (NaN without a covariance).</summary>
    public double SigmaP => Covariance is null ? double.NaN : Math.Sqrt(Covariance[2, 2]);

    /// <summary>True when parameters were estimated (any status but <see cref="OmoriFitStatus.TooFewEvents"/>).</summary>
    public bool HasEstimate => Status != OmoriFitStatus.TooFewEvents;
}
