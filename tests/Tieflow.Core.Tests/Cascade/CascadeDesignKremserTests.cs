using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>
/// Design on a constant distribution coefficient against the Kremser equation (Kremser 1930; standard texts, e.g.
/// Treybal, Mass-Transfer Operations, 3rd ed., 1980, ch. 10) and the minimum-solvent balance of standard texts: with
/// pure solvent and Y = m X the pinch is at the feed end, Y_1 = m X_F, so S'_min = F' (X_F - X_N) / (m X_F).
/// </summary>
public sealed class CascadeDesignKremserTests
{
    private const double Carrier = 1000, XF = 0.10, M = 1.5;

    private static double KremserRaffinateRatio(double solvent, int n)
    {
        double eps = M * solvent / Carrier;
        return XF * (eps - 1) / (Math.Pow(eps, n + 1) - 1);
    }

    private static double Fraction(double ratio) => ratio / (1 + ratio);

    private static CascadeDesign Design() => new(TestSystems.ConstantK(M), TestSystems.Temperature);

    [Theory]
    [InlineData(750.0, 5)]
    [InlineData(750.0, 1)]
    [InlineData(1200.0, 3)]
    [InlineData(600.0, 12)]
    public void FindStages_KremserTarget_GivesKremserStageCount(double solvent, int n)
    {
        double target = Fraction(KremserRaffinateRatio(solvent, n));
        DesignResult result = Design().FindStages(TestSystems.CarrierFeed(Carrier, XF), TestSystems.SolventStream(solvent), DesignTarget.RaffinateFraction(target));
        Assert.Equal(n, result.Stages);
        Assert.True(Math.Abs(result.FractionalStages - n) < 1e-6, $"fractional stages {result.FractionalStages}");
        Assert.True(Math.Abs(TestSystems.RaffinateRatio(result.Cascade.Raffinate) - KremserRaffinateRatio(solvent, n)) < 1e-9);
    }

    [Fact]
    public void FindStages_TargetBetweenWholeStages_RoundsUpAndMeetsTarget()
    {
        double target = 0.5 * (Fraction(KremserRaffinateRatio(750, 4)) + Fraction(KremserRaffinateRatio(750, 5)));
        DesignResult result = Design().FindStages(TestSystems.CarrierFeed(Carrier, XF), TestSystems.SolventStream(750), DesignTarget.RaffinateFraction(target));
        Assert.Equal(5, result.Stages);
        Assert.InRange(result.FractionalStages, 4.0, 5.0);
        Assert.True(result.Cascade.Raffinate.Composition.Solute <= target);
    }

    [Fact]
    public void FindSolvent_KremserTarget_GivesKremserSolventFlow()
    {
        double target = Fraction(KremserRaffinateRatio(750, 5));
        DesignResult result = Design().FindSolvent(TestSystems.CarrierFeed(Carrier, XF), new Ternary(0, 0, 1), 5, DesignTarget.RaffinateFraction(target));
        Assert.True(Math.Abs(result.SolventFlow - 750) < 1e-6 * 750, $"solvent {result.SolventFlow}");
        Assert.True(Math.Abs(result.FractionalStages - 5) < 1e-6);
    }

    [Fact]
    public void FindSolvent_RecoveryTarget_GivesKremserSolventFlow()
    {
        double recovery = 1 - (KremserRaffinateRatio(750, 5) / XF);
        DesignResult result = Design().FindSolvent(TestSystems.CarrierFeed(Carrier, XF), new Ternary(0, 0, 1), 5, DesignTarget.Recovery(recovery));
        Assert.True(Math.Abs(result.SolventFlow - 750) < 1e-6 * 750, $"solvent {result.SolventFlow}");
        Assert.Equal(recovery, result.Cascade.Recovery, 8);
    }

    [Fact]
    public void FindMinimumSolvent_ConstantK_GivesFeedEndPinch()
    {
        double xN = KremserRaffinateRatio(750, 5);
        double expected = Carrier * (XF - xN) / (M * XF);
        MinimumSolventResult result = Design().FindMinimumSolvent(TestSystems.CarrierFeed(Carrier, XF), new Ternary(0, 0, 1), DesignTarget.RaffinateFraction(Fraction(xN)));
        Assert.True(Math.Abs(result.MinimumSolventFlow - expected) < 1e-7 * expected, $"minimum {result.MinimumSolventFlow} against {expected}");
    }

    [Fact]
    public void FindStages_SolventBelowMinimum_ThrowsWithWhatToChange()
    {
        double target = Fraction(KremserRaffinateRatio(750, 5));
        var ex = Assert.Throws<InfeasibleSpecificationException>(() => Design().FindStages(TestSystems.CarrierFeed(Carrier, XF), TestSystems.SolventStream(500), DesignTarget.RaffinateFraction(target)));
        Assert.Contains("raise the solvent flow above 585.5", ex.Message, StringComparison.Ordinal);
        Assert.Contains("relax the target to", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void FindStages_TargetAboveFeed_Throws()
    {
        var ex = Assert.Throws<InfeasibleSpecificationException>(() => Design().FindStages(TestSystems.CarrierFeed(Carrier, XF), TestSystems.SolventStream(750), DesignTarget.RaffinateFraction(0.2)));
        Assert.Contains("lower the target below", ex.Message, StringComparison.Ordinal);
    }
}
