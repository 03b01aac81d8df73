using System.Globalization;
using System.Text;

namespace Forecast.Core.Advisory;

/// <summary>One cell of a forecast table as the advisory needs it: plain numbers.</summary>
/// <param name="T1Days">Window start, days after the mainshock.</param>
/// <param name="T2Days">Window end, days after the mainshock.</param>
/// <param name="MinMagnitude">Counts aftershocks of this magnitude and above.</param>
/// <param name="Probability">Chance of at least one, 0..1.</param>
/// <param name="ExpectedNumber">Mean number.</param>
/// <param name="Median">Median number.</param>
/// <param name="Low95">2.5 per cent quantile of the number.</param>
/// <param name="High95">97.5 per cent quantile of the number.</param>
/// <param name="BackgroundProbability">Chance of at least one in the same window and magnitude without the
/// sequence (the background rate), when known.</param>
public sealed record AdvisoryCell(
    double T1Days, double T2Days, double MinMagnitude, double Probability, double ExpectedNumber,
    long Median, long Low95, long High95, double? BackgroundProbability = null);

/// <summary>What an advisory is written from.</summary>
/// <param name="AgencyName">The official agency people should follow, e.g. "the National Seismic Service".</param>
/// <param name="Title">A label for the sequence, e.g. "M 6.4, Demo region".</param>
/// <param name="MainshockMagnitude">Mm.</param>
/// <param name="MainshockTimeUtc">Mainshock origin time, UTC.</param>
/// <param name="IssueTimeUtc">When the forecast was issued, UTC.</param>
/// <param name="Exercise">A drill: every line that could be read alone is marked.</param>
/// <param name="Cells">The forecast table.</param>
public sealed record AdvisoryInput(
    string AgencyName, string Title, double MainshockMagnitude, DateTime MainshockTimeUtc, DateTime IssueTimeUtc,
    bool Exercise, IReadOnlyList<AdvisoryCell> Cells);

/// <summary>A plain-language advisory: the whole text, and its parts for display.</summary>
/// <param name="Text">The advisory as one text.</param>
/// <param name="Headline">The first line (carries the exercise marker on drills).</param>
/// <param name="Statements">One sentence per window and magnitude, each with its number.</param>
/// <param name="Cautions">The standing cautions, each a sentence.</param>
/// <param name="Exercise">True for a drill.</param>
public sealed record AdvisoryText(
    string Text, string Headline, IReadOnlyList<string> Statements, IReadOnlyList<string> Cautions, bool Exercise);

/// <summary>Writes the plain-language advisory of a forecast from its numbers.</summary>
/// <remarks>
/// Chances are given in the calibrated words of the IPCC AR5 guidance (Mastrandrea et al. 2010) with the number
/// always beside the word (<see cref="LikelihoodWords"/>); numbers of aftershocks as the 95 % range of the
/// forecast distribution with its median; the comparison with the background as a ratio of chances (the
/// probability gain). The cautions are the project's standing text and are on every advisory.
/// </remarks>
public static class AdvisoryBuilder
{
    /// <summary>The marker on every output of a drill.</summary>
    public const string ExerciseMarker = "EXERCISE EXERCISE EXERCISE";

    /// <summary>The standing cautions, with the agency's name in the third.</summary>
    public static IReadOnlyList<string> Cautions(string agencyName)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(agencyName);
        return
        [
            "A forecast is not a prediction: it gives the chances of aftershocks, not the time, place or size of the next one.",
            "Strong shocks can come without warning at any time, and one larger than the mainshock is possible.",
            $"Follow the advice of {agencyName} and of local emergency management.",
            "Whether a damaged building is safe to enter must be judged by licensed professionals, such as structural engineers or building inspectors.",
        ];
    }

    /// <summary>The parts of a generated advisory that an edited one leaves out: each statement of a chance and
    /// number (the lines <see cref="Build"/> starts with "- ") and each standing caution.</summary>
    /// <remarks>A duty seismologist may reword and add around them, but a published advisory keeps every number
    /// and every caution. Runs of white space compare as one space, so an edit may rewrap the lines.</remarks>
    public static IReadOnlyList<string> MissingFromEdit(string edited, string generatedText, string agencyName)
    {
        ArgumentNullException.ThrowIfNull(edited);
        ArgumentNullException.ThrowIfNull(generatedText);
        var statements = generatedText.Split('\n')
            .Select(l => l.TrimEnd('\r'))
            .Where(l => l.StartsWith("- ", StringComparison.Ordinal))
            .Select(l => l[2..]);
        var kept = Squeeze(edited);
        return statements.Concat(Cautions(agencyName))
            .Where(part => !kept.Contains(Squeeze(part), StringComparison.Ordinal))
            .ToList();
    }

    static string Squeeze(string text) => string.Join(' ', text.Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries));

    /// <summary>The advisory for <paramref name="input"/>.</summary>
    /// <exception cref="ArgumentException">No agency name, no cells, or a cell with an impossible number.</exception>
    public static AdvisoryText Build(AdvisoryInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        ArgumentException.ThrowIfNullOrWhiteSpace(input.AgencyName, nameof(input));
        if (input.Cells is null || input.Cells.Count == 0)
            throw new ArgumentException("An advisory needs at least one forecast cell.", nameof(input));

        var ic = CultureInfo.InvariantCulture;
        var headline = (input.Exercise ? ExerciseMarker + ": THIS IS A DRILL, NOT A REAL FORECAST. " : "")
            + string.Create(ic, $"Aftershock forecast: {input.Title}");

        var statements = new List<string>();
        foreach (var window in input.Cells.GroupBy(c => (c.T1Days, c.T2Days)).OrderBy(g => g.Key.T2Days - g.Key.T1Days))
        {
            foreach (var cell in window.OrderBy(c => c.MinMagnitude))
                statements.Add(Statement(cell, input.IssueTimeUtc, input.MainshockTimeUtc));
        }
        var cautions = Cautions(input.AgencyName);

        var text = new StringBuilder();
        text.AppendLine(headline);
        text.AppendLine(string.Create(ic,
            $"Issued {input.IssueTimeUtc:yyyy-MM-dd HH:mm} UTC for the magnitude {input.MainshockMagnitude:0.0} earthquake of {input.MainshockTimeUtc:yyyy-MM-dd HH:mm} UTC."));
        text.AppendLine("Aftershocks will continue. The chances below come from the sequence so far and the usual behaviour of aftershock sequences.");
        text.AppendLine();
        foreach (var s in statements) text.Append("- ").AppendLine(s);
        text.AppendLine();
        foreach (var c in cautions) text.AppendLine(c);
        text.AppendLine();
        text.AppendLine("Chances are described in the calibrated words of the IPCC (virtually certain 99-100 %, very likely 90-100 %, " +
                        "likely 66-100 %, about as likely as not 33-66 %, unlikely 0-33 %, very unlikely 0-10 %, exceptionally unlikely 0-1 %).");
        if (input.Exercise) text.AppendLine(ExerciseMarker + ": THIS IS A DRILL, NOT A REAL FORECAST.");
        return new AdvisoryText(text.ToString().TrimEnd() + "\n", headline, statements, cautions, input.Exercise);
    }

    static string Statement(AdvisoryCell cell, DateTime issueUtc, DateTime mainshockUtc)
    {
        Check(cell);
        var ic = CultureInfo.InvariantCulture;
        var start = mainshockUtc.AddDays(cell.T1Days);
        var when = Math.Abs((start - issueUtc).TotalHours) < 1
            ? $"In the next {Duration(cell.T2Days - cell.T1Days)}"
            : string.Create(ic, $"In the {Duration(cell.T2Days - cell.T1Days)} from {start:yyyy-MM-dd HH:mm} UTC");
        var magnitude = string.Create(ic, $"magnitude {cell.MinMagnitude:0.#} or larger");
        var sentence = new StringBuilder(
            $"{when}, an aftershock of {magnitude} is {LikelihoodWords.Describe(cell.Probability)}. ");
        sentence.Append(Number(cell, magnitude));
        if (cell.BackgroundProbability is { } bg)
        {
            sentence.Append(' ').Append(Comparison(cell.Probability, bg));
        }
        return sentence.ToString();
    }

    static string Number(AdvisoryCell cell, string magnitude)
    {
        var ic = CultureInfo.InvariantCulture;
        var mean = cell.ExpectedNumber < 10
            ? cell.ExpectedNumber.ToString("0.##", ic)
            : Math.Round(cell.ExpectedNumber).ToString("0", ic);
        if (cell.High95 == 0)
            return $"Most likely there will be none of {magnitude} (expected number {mean}; 95 % range 0 to 0).";
        return string.Create(ic,
            $"The number of aftershocks of {magnitude} is most likely {cell.Median}, between {cell.Low95} and {cell.High95} (95 % range; expected number {mean}).");
    }

    static string Comparison(double probability, double background)
    {
        var bgText = LikelihoodWords.Percent(background);
        if (background <= 0) return "Without this sequence the chance would be close to nil.";
        var gain = probability / background;
        var ic = CultureInfo.InvariantCulture;
        var ratio = gain >= 10 ? Math.Round(gain).ToString("0", ic) : gain.ToString("0.#", ic);
        return gain switch
        {
            >= 1.5 => $"That is about {ratio} times the usual chance here without the sequence ({bgText}).",
            // Near certainty both ways the ratio of chances is small even when many more shocks are expected.
            > 1.1 => $"That is above the usual chance here without the sequence ({bgText}).",
            >= 0.9 => $"That is about the usual chance here without the sequence ({bgText}).",
            _ => $"That is below the usual chance here ({bgText}); the background estimate may be uncertain.",
        };
    }

    static string Duration(double days)
    {
        var ic = CultureInfo.InvariantCulture;
        return Math.Round(days, 6) switch
        {
            1 => "day",
            7 => "week",
            30 => "month",
            365 => "year",
            < 1 => string.Create(ic, $"{days * 24:0.#} hours"),
            _ => string.Create(ic, $"{days:0.#} days"),
        };
    }

    static void Check(AdvisoryCell cell)
    {
        if (!(cell.Probability is >= 0 and <= 1))
            throw new ArgumentException($"A probability must be in 0..1, got {cell.Probability}.", nameof(cell));
        if (!(cell.ExpectedNumber >= 0) || double.IsInfinity(cell.ExpectedNumber))
            throw new ArgumentException($"An expected number must be finite and >= 0, got {cell.ExpectedNumber}.", nameof(cell));
        if (cell.Low95 < 0 || cell.High95 < cell.Low95)
            throw new ArgumentException($"The 95 % range [{cell.Low95}, {cell.High95}] is not a range.", nameof(cell));
        if (!(cell.T2Days > cell.T1Days))
            throw new ArgumentException($"A window needs t1 < t2, got [{cell.T1Days}, {cell.T2Days}].", nameof(cell));
        if (cell.BackgroundProbability is { } bg && !(bg is >= 0 and <= 1))
            throw new ArgumentException($"A background probability must be in 0..1, got {bg}.", nameof(cell));
    }
}
