using Forecast.Core.Catalog;

namespace Forecast.Core.Completeness;

/// <summary>One trial completeness magnitude of the goodness-of-fit test.</summary>
/// <param name="Mc">Trial Mc (a bin centre).</param>
/// <param name="ResidualPercent">R, the per cent of the observed distribution the Gutenberg-Richter model
/// explains.</param>
/// <param name="Count">Events at or above the trial Mc.</param>
/// <param name="B">Exact binned b (Tinti &amp; Mulargia 1987) of those events, used for the model.</param>
public sealed record GoodnessOfFitTrial(double Mc, double ResidualPercent, int Count, double B);

/// <summary>Completeness magnitude by the goodness-of-fit test (GFT) of Wiemer &amp; Wyss (2000), BSSA 90,
/// 859-869: the lowest trial Mc whose Gutenberg-Richter model explains the observed distribution above it with
/// residual <c>R = 100 - 100 sum |B_i - S_i| / sum B_i</c> of at least 90 or 95 per cent.</summary>
/// <remarks>
/// <para>B_i and S_i are the observed and modelled cumulative counts N(&gt;= M_i) in the bins from the trial Mc to
/// the largest magnitude, as in Wiemer &amp; Wyss (2000) and ZMAP's <c>mcperc</c> (from memory). The model is
/// <c>S_i = N(&gt;= Mc) 10^(-b (M_i - Mc))</c> with the exact binned b of Tinti &amp; Mulargia (1987) (the paper
/// used Aki's b; the difference is a fraction of a per cent in b).</para>
/// <para>A trial needs at least <c>minEventsAboveMc</c> events (default 25, project choice) and a defined b;
/// otherwise a few events in the top bins would fit trivially.</para>
/// </remarks>
public static class GoodnessOfFit
{
    /// <summary>Fewest events above a trial Mc for the trial to count (project choice).</summary>
    public const int DefaultMinEventsAboveMc = 25;

    /// <summary>The residual of every trial Mc with enough events, lowest Mc first.</summary>
    /// <exception cref="ArgumentException">A magnitude is not finite, the bin width is not above zero, or
    /// <paramref name="minEventsAboveMc"/> is below 2.</exception>
    public static IReadOnlyList<GoodnessOfFitTrial> Trials(
        ReadOnlySpan<double> magnitudes, double binWidth, int minEventsAboveMc = DefaultMinEventsAboveMc)
    {
        CheckArguments(magnitudes, binWidth, minEventsAboveMc);
        return TrialsOfChecked(magnitudes, binWidth, minEventsAboveMc);
    }

    /// <summary>The lowest trial Mc with R &gt;= <paramref name="levelPercent"/>; NaN when no trial reaches
    /// it.</summary>
    /// <exception cref="ArgumentException">As <see cref="Trials"/>, or a level outside 0..100.</exception>
    public static double McAtLevel(
        ReadOnlySpan<double> magnitudes, double binWidth, double levelPercent,
        int minEventsAboveMc = DefaultMinEventsAboveMc)
    {
        if (!(levelPercent >= 0 && levelPercent <= 100))
            throw new ArgumentException($"Level must be a per cent between 0 and 100, got {levelPercent}.",
                nameof(levelPercent));
        CheckArguments(magnitudes, binWidth, minEventsAboveMc);
        return FirstAtLevel(TrialsOfChecked(magnitudes, binWidth, minEventsAboveMc), levelPercent)?.Mc
            ?? double.NaN;
    }

    /// <summary>Mc at 95 % if some trial reaches it, else at 90 %, else maximum curvature + 0.2 (the "best
    /// combination" order of Woessner &amp; Wiemer 2005, BSSA 95, 684-698), with a bootstrap standard deviation
    /// of that same rule.</summary>
    /// <param name="magnitudes">Magnitudes in any order.</param>
    /// <param name="binWidth">Magnitude bin width.</param>
    /// <param name="bootstrapSamples">Resamples for sigma; 0 or 1 gives sigma NaN.</param>
    /// <param name="seed">Seed of the resampling; equal seeds give equal results.</param>
    /// <param name="minEventsAboveMc">Fewest events above a trial Mc.</param>
    /// <returns>The estimate; <see cref="CompletenessEstimate.Method"/> says which level was reached, and
    /// <see cref="CompletenessEstimate.Note"/> says so in words when neither was and MAXC + 0.2 is used.</returns>
    /// <exception cref="ArgumentException">As <see cref="Trials"/>, or negative bootstrap samples.</exception>
    public static CompletenessEstimate Estimate(
        ReadOnlySpan<double> magnitudes, double binWidth,
        int bootstrapSamples = MaximumCurvature.DefaultBootstrapSamples, int seed = 0,
        int minEventsAboveMc = DefaultMinEventsAboveMc)
    {
        CheckArguments(magnitudes, binWidth, minEventsAboveMc);
        Bootstrap.CheckArguments(bootstrapSamples);
        if (magnitudes.IsEmpty)
        {
            return new(double.NaN, double.NaN, CompletenessMethod.MaximumCurvatureFallback, 0, 0, binWidth,
                bootstrapSamples, seed, double.NaN, "No magnitudes: Mc is undefined.");
        }

        var (mc, method, residual) = BestOfChecked(magnitudes, binWidth, minEventsAboveMc);
        var sigma = Bootstrap.StandardDeviation(magnitudes, bootstrapSamples, seed,
            sample => BestOfChecked(sample, binWidth, minEventsAboveMc).Mc);
        return new(mc, sigma, method, magnitudes.Length,
            MaximumCurvature.CountAtOrAbove(magnitudes, mc, binWidth), binWidth, bootstrapSamples, seed,
            residual, NoteFor(method));
    }

    static string NoteFor(CompletenessMethod method) => method switch
    {
        CompletenessMethod.GoodnessOfFit90 => "The goodness-of-fit test reached 90 % but not 95 %.",
        CompletenessMethod.MaximumCurvatureFallback =>
            "The goodness-of-fit test reached neither 95 % nor 90 %; Mc is maximum curvature + 0.2 instead.",
        _ => "",
    };

    static (double Mc, CompletenessMethod Method, double Residual) BestOfChecked(
        ReadOnlySpan<double> magnitudes, double binWidth, int minEventsAboveMc)
    {
        var trials = TrialsOfChecked(magnitudes, binWidth, minEventsAboveMc);
        if (FirstAtLevel(trials, 95) is { } at95)
            return (at95.Mc, CompletenessMethod.GoodnessOfFit95, at95.ResidualPercent);
        if (FirstAtLevel(trials, 90) is { } at90)
            return (at90.Mc, CompletenessMethod.GoodnessOfFit90, at90.ResidualPercent);
        var fallback = MaximumCurvature.McOfChecked(magnitudes, binWidth, MaximumCurvature.DefaultCorrection);
        return (fallback, CompletenessMethod.MaximumCurvatureFallback, double.NaN);
    }

    static GoodnessOfFitTrial? FirstAtLevel(IReadOnlyList<GoodnessOfFitTrial> trials, double levelPercent)
    {
        foreach (var trial in trials)
        {
            if (trial.ResidualPercent >= levelPercent) return trial;
        }
        return null;
    }

    static List<GoodnessOfFitTrial> TrialsOfChecked(
        ReadOnlySpan<double> magnitudes, double binWidth, int minEventsAboveMc)
    {
        var trials = new List<GoodnessOfFitTrial>();
        if (magnitudes.IsEmpty) return trials;

        var (lowIndex, counts) = FrequencyMagnitudeDistribution.Histogram(magnitudes, binWidth);
        var cumulative = new int[counts.Length];
        for (int k = counts.Length - 1, above = 0; k >= 0; k--) cumulative[k] = above += counts[k];

        for (var j = 0; j < counts.Length && cumulative[j] >= minEventsAboveMc; j++)
        {
            if (TrialAt(j, counts, cumulative, binWidth) is not { } fit) continue;
            trials.Add(new(MagnitudeBinning.BinCentre(lowIndex + j, binWidth), fit.R, cumulative[j], fit.B));
        }
        return trials;
    }

    // Trial Mc at bin j. Binned GR magnitudes are geometric in the bin index above Mc (Tinti & Mulargia 1987):
    // with mean index offset u, the MLE ratio is q = u / (1 + u) = 10^(-b dM), and N(>= bin k) = n q^(k - j).
    static (double R, double B)? TrialAt(int j, int[] counts, int[] cumulative, double binWidth)
    {
        double n = cumulative[j], indexSum = 0;
        for (var k = j; k < counts.Length; k++) indexSum += (double)counts[k] * (k - j);
        var u = indexSum / n;
        if (u <= 0) return null; // all events in the trial bin: b undefined

        var q = u / (1 + u);
        var b = Math.Log(1 + 1 / u) / (binWidth * Math.Log(10));
        double misfit = 0, observed = 0, modelled = n;
        for (var k = j; k < counts.Length; k++, modelled *= q)
        {
            misfit += Math.Abs(cumulative[k] - modelled);
            observed += cumulative[k];
        }
        return (100 - 100 * misfit / observed, b);
    }

    static void CheckArguments(ReadOnlySpan<double> magnitudes, double binWidth, int minEventsAboveMc)
    {
        Guard.AllFinite(magnitudes, nameof(magnitudes));
        Guard.Positive(binWidth, nameof(binWidth));
        ArgumentOutOfRangeException.ThrowIfLessThan(minEventsAboveMc, 2);
    }
}
