using Forecast.Core.Omori;
using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Posterior;

/// <summary>Grid sizes of the posterior integration.</summary>
/// <param name="CNodes">Nodes in log10 c (the only dimension that costs a pass over the data per node).</param>
/// <param name="PNodes">Nodes in p for each c.</param>
/// <param name="KNodes">Nodes in log10 K for each (c, p).</param>
/// <param name="BNodes">Nodes in b for each (c, p, K).</param>
/// <param name="HalfWidthSd">Half-width of the c, p and K ranges in (approximate conditional) standard deviations.</param>
/// <param name="BHalfWidthSd">Half-width of the b range in conditional standard deviations.</param>
/// <param name="PruneBelow">Nodes whose weight is below this fraction of the largest are dropped (then renormalised).</param>
/// <param name="Fit">Options of the Omori-Utsu fit that centres the c range.</param>
public sealed record PosteriorOptions(
    int CNodes = 21, int PNodes = 15, int KNodes = 15, int BNodes = 13,
    double HalfWidthSd = 7, double BHalfWidthSd = 6, double PruneBelow = 1e-12, OmoriFitOptions? Fit = null);

/// <summary>One grid node: a parameter vector and its normalised posterior weight.</summary>
public readonly record struct PosteriorNode(double A, double B, double P, double Log10C, double Weight)
{
    /// <summary>c in days.</summary>
    public double C => Math.Pow(10, Log10C);
}

/// <summary>Posterior moments of (a, b, p, log10 c), in that order in <see cref="Covariance"/>.</summary>
public sealed record PosteriorSummary(
    double MeanA, double MeanB, double MeanP, double MeanLog10C,
    double SdA, double SdB, double SdP, double SdLog10C, double[,] Covariance);

/// <summary>The posterior over Reasenberg-Jones parameters as weighted grid nodes, with its summary.</summary>
/// <param name="Prior">The generic set used as prior.</param>
/// <param name="MainshockMagnitude">Mm, needed to turn a node into a forecast.</param>
/// <param name="Mc">Completeness magnitude of the data.</param>
/// <param name="EventCount">Events with <c>M &gt;= Mc</c> inside [S, T] that entered the likelihood.</param>
/// <param name="SequenceFit">The Omori-Utsu fit of those events, when it was attempted.</param>
/// <param name="Nodes">Weighted nodes; the weights sum to 1.</param>
/// <param name="Summary">Posterior means, standard deviations and covariance.</param>
/// <param name="CoverageOk">False if, after widening, the grid still puts weight on its edge in log10 c.</param>
/// <param name="Message">Plain account of what was done.</param>
public sealed record PosteriorResult(
    GenericParameterSet Prior, double MainshockMagnitude, double Mc, int EventCount, OmoriFit? SequenceFit,
    IReadOnlyList<PosteriorNode> Nodes, PosteriorSummary Summary, bool CoverageOk, string Message);
