using Forecast.Core.ReasenbergJones;

namespace Forecast.Core.Tests.ReasenbergJones;

public class ReasenbergJonesTests
{
    static readonly RjParameters Generic1989 = GenericParameterSets.ReasenbergJones1989.Mean;

    [Fact]
    public void GenericParametersGiveAboutTenPercentForMainshockSizeWithinAWeek()
    {
        // METHODS.md section 4 worked check from the 1989 generic values (from memory):
        // integral_0^7 (t + 0.05)^-1.08 dt = 5.19, N = 10^-1.67 x 5.19 = 0.111, P = 1 - exp(-0.111) = 10.5 %.
        double n = Forecast.Core.ReasenbergJones.ReasenbergJones.ExpectedNumber(Generic1989, 6.0, 6.0, 0, 7);
        double p = Forecast.Core.ReasenbergJones.ReasenbergJones.ProbabilityOfAtLeastOne(Generic1989, 6.0, 6.0, 0, 7);
        Assert.Equal(0.111, n, 0.001);
        Assert.Equal(0.105, p, 0.001);
    }

    [Fact]
    public void ExpectedNumberScalesByTenToTheBPerMagnitudeUnit()
    {
        // Reasenberg & Jones (1989): lambda(t, M) proportional to 10^(b (Mm - M)).
        double n5 = Forecast.Core.ReasenbergJones.ReasenbergJones.ExpectedNumber(Generic1989, 6.5, 5.0, 0, 30);
        double n4 = Forecast.Core.ReasenbergJones.ReasenbergJones.ExpectedNumber(Generic1989, 6.5, 4.0, 0, 30);
        Assert.Equal(Math.Pow(10, 0.91), n4 / n5, 1e-12);
    }

    [Fact]
    public void AFromKInvertsTheProductivityRelation()
    {
        // K = 10^(a + b (Mm - Mc)) (Reasenberg & Jones 1989): with a = -1.67, b = 0.91, Mm - Mc = 3, log10 K = 1.06.
        double k = Forecast.Core.ReasenbergJones.ReasenbergJones.KFromA(-1.67, 0.91, 6.0, 3.0);
        Assert.Equal(1.06, Math.Log10(k), 1e-12);
        Assert.Equal(-1.67, Forecast.Core.ReasenbergJones.ReasenbergJones.AFromK(k, 0.91, 6.0, 3.0), 1e-12);
    }

    [Fact]
    public void BuiltInSetIsFoundByNameAndSaysWhereItComesFrom()
    {
        var set = GenericParameterSets.Get("rj1989-generic");
        Assert.Equal(new RjParameters(-1.67, 0.91, 1.08, 0.05), set.Mean);
        Assert.True(set.FromMemory);
        Assert.Contains("Reasenberg & Jones (1989)", set.Source, StringComparison.Ordinal);
        Assert.Contains("project choice", set.Source, StringComparison.Ordinal);
    }

    [Fact]
    public void UnknownSetNameFailsAndListsTheKnownOnes()
    {
        var error = Assert.Throws<ArgumentException>(() => GenericParameterSets.Get("no-such-set"));
        Assert.Contains("rj1989-generic", error.Message, StringComparison.Ordinal);
        Assert.False(GenericParameterSets.TryGet("no-such-set", out _));
    }

    [Fact]
    public void CustomSetsCanBeBuiltAndAreValidated()
    {
        var custom = new GenericParameterSet("demo", new RjParameters(-2, 1, 1.1, 0.02), 0.4, 0.1, 0.15, 0.4, "Invented for a test", false);
        custom.Validate();
        var bad = custom with { SigmaP = 0 };
        Assert.Throws<ArgumentException>(bad.Validate);
    }

    [Fact]
    public void InvalidParametersAreRejected()
    {
        Assert.Throws<ArgumentException>(() =>
            Forecast.Core.ReasenbergJones.ReasenbergJones.ExpectedNumber(Generic1989 with { C = -1 }, 6, 5, 0, 7));
        Assert.Throws<ArgumentException>(() =>
            Forecast.Core.ReasenbergJones.ReasenbergJones.ExpectedNumber(Generic1989, 6, 5, 7, 1));
    }
}
