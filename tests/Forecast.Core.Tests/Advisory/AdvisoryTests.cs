using Forecast.Core.Advisory;

namespace Forecast.Core.Tests.Advisory;

public class LikelihoodWordsTests
{
    // Thresholds: IPCC AR5 guidance note on consistent treatment of uncertainties (Mastrandrea et al. 2010),
    // table 1, from memory: virtually certain 99-100 %, very likely 90-100 %, likely 66-100 %, about as likely as
    // not 33-66 %, unlikely 0-33 %, very unlikely 0-10 %, exceptionally unlikely 0-1 %. The most specific range
    // holding the value is used; a shared edge goes to the term nearer the end of the scale.
    [Theory]
    [InlineData(1.0, "virtually certain")]
    [InlineData(0.99, "virtually certain")]
    [InlineData(0.95, "very likely")]
    [InlineData(0.90, "very likely")]
    [InlineData(0.80, "likely")]
    [InlineData(0.66, "likely")]
    [InlineData(0.50, "about as likely as not")]
    [InlineData(0.3301, "about as likely as not")]
    [InlineData(0.33, "unlikely")]
    [InlineData(0.20, "unlikely")]
    [InlineData(0.10, "very unlikely")]
    [InlineData(0.05, "very unlikely")]
    [InlineData(0.01, "exceptionally unlikely")]
    [InlineData(0.0, "exceptionally unlikely")]
    public void ProbabilitiesGetTheMostSpecificIpccAr5Term(double probability, string expected) =>
        Assert.Equal(expected, LikelihoodWords.For(probability));

    [Theory]
    [InlineData(0.123, "unlikely (12 %)")]
    [InlineData(0.004, "exceptionally unlikely (0.4 %)")]
    [InlineData(0.0004, "exceptionally unlikely (less than 0.1 %)")]
    [InlineData(0.9951, "virtually certain (more than 99 %)")]
    public void TheNumberIsAlwaysBesideTheWord(double probability, string expected) =>
        Assert.Equal(expected, LikelihoodWords.Describe(probability));

    [Theory]
    [InlineData(-0.01)]
    [InlineData(1.01)]
    [InlineData(double.NaN)]
    public void ImpossibleProbabilitiesAreRefused(double probability) =>
        Assert.Throws<ArgumentException>(() => LikelihoodWords.For(probability));
}

public class AdvisoryBuilderTests
{
    static readonly DateTime Main = new(2026, 3, 1, 3, 0, 0, DateTimeKind.Utc);
    static readonly DateTime Issue = Main.AddDays(2);

    static AdvisoryInput Input(bool exercise = false, double? background = null) => new(
        "the Demo Seismic Service", "magnitude 6.1, Demo region", 6.1, Main, Issue, exercise,
        [
            new AdvisoryCell(2, 9, 3, 0.97, 25.3, 24, 12, 41, background),
            new AdvisoryCell(2, 9, 5, 0.21, 0.26, 0, 0, 2, background),
            new AdvisoryCell(2, 3, 5, 0.05, 0.05, 0, 0, 1),
        ]);

    [Fact]
    public void EveryAdvisoryCarriesTheFourCautionsAndTheAgency()
    {
        var a = AdvisoryBuilder.Build(Input());
        Assert.Equal(4, a.Cautions.Count);
        foreach (var c in a.Cautions) Assert.Contains(c, a.Text);
        Assert.Contains("not a prediction", a.Text);
        Assert.Contains("without warning", a.Text);
        Assert.Contains("Follow the advice of the Demo Seismic Service and of local emergency management.", a.Text);
        Assert.Contains("licensed professionals", a.Text);
    }

    [Fact]
    public void EachStatementGivesTheWordTheNumberAndTheRange()
    {
        var a = AdvisoryBuilder.Build(Input());
        Assert.Equal(3, a.Statements.Count);
        // Shortest window first: the day, then the week (magnitude 3 before 5).
        Assert.Equal("In the next day, an aftershock of magnitude 5 or larger is very unlikely (5 %). " +
                     "The number of aftershocks of magnitude 5 or larger is most likely 0, between 0 and 1 (95 % range; expected number 0.05).",
            a.Statements[0]);
        Assert.StartsWith("In the next week, an aftershock of magnitude 3 or larger is very likely (97 %).", a.Statements[1]);
        Assert.Contains("between 12 and 41 (95 % range; expected number 25)", a.Statements[1]);
        Assert.Contains("unlikely (21 %)", a.Statements[2]);
        Assert.DoesNotContain("EXERCISE", a.Text);
    }

    [Fact]
    public void TheBackgroundComparisonIsARatioOfChances()
    {
        // 0.21 / 0.007 = 30 times.
        var a = AdvisoryBuilder.Build(Input(background: 0.007));
        Assert.Contains("That is about 30 times the usual chance here without the sequence (0.7 %).", a.Statements[2]);
    }

    [Fact]
    public void ADrillIsMarkedAtTheStartAndTheEnd()
    {
        var a = AdvisoryBuilder.Build(Input(exercise: true));
        Assert.StartsWith(AdvisoryBuilder.ExerciseMarker, a.Text);
        Assert.StartsWith(AdvisoryBuilder.ExerciseMarker, a.Headline);
        Assert.EndsWith(AdvisoryBuilder.ExerciseMarker + ": THIS IS A DRILL, NOT A REAL FORECAST.\n", a.Text);
    }

    [Fact]
    public void AnEditMayRewordAndAddButNotDropANumberOrACaution()
    {
        // The cautions and the numbers beside the words are the project's rule for every published advisory (common
        // practice in public hazard communication); an edit is checked against the generated text it replaces.
        var a = AdvisoryBuilder.Build(Input());
        const string agency = "the Demo Seismic Service";
        var rewrapped = "Note from the duty seismologist: the sequence is slowing.\n\n" +
            string.Join("\n", a.Statements.Select(st => st.Replace(". ", ".\n   ", StringComparison.Ordinal))) +
            "\n" + string.Join(" ", a.Cautions);
        Assert.Empty(AdvisoryBuilder.MissingFromEdit(rewrapped, a.Text, agency));
        Assert.Empty(AdvisoryBuilder.MissingFromEdit(a.Text, a.Text, agency));

        var withoutNumbers = rewrapped.Replace(a.Statements[1].Split(". ")[0], "In the next week, aftershocks are likely",
            StringComparison.Ordinal);
        Assert.Equal([a.Statements[1]], AdvisoryBuilder.MissingFromEdit(withoutNumbers, a.Text, agency));

        var missing = AdvisoryBuilder.MissingFromEdit("All clear.", a.Text, agency);
        Assert.Equal(a.Statements.Concat(a.Cautions), missing);
    }

    [Fact]
    public void NoAgencyOrNoCellsIsRefused()
    {
        Assert.Throws<ArgumentException>(() => AdvisoryBuilder.Build(Input() with { AgencyName = " " }));
        Assert.Throws<ArgumentException>(() => AdvisoryBuilder.Build(Input() with { Cells = [] }));
        Assert.Throws<ArgumentException>(() => AdvisoryBuilder.Build(Input() with
        {
            Cells = [new AdvisoryCell(0, 1, 5, 1.5, 1, 1, 0, 2)],
        }));
    }
}
