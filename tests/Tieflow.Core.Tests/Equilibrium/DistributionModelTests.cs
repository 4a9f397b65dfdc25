using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Distribution;
using Tieflow.Core.Tests.Cascade;

namespace Tieflow.Core.Tests.Equilibrium;

public sealed class DistributionModelTests
{
    private static readonly (double X, double Y)[] Isotherm = [(0.02, 0.05), (0.05, 0.11), (0.10, 0.19), (0.20, 0.30)];

    private static DistributionModel TableModel() =>
        new(TestSystems.Immiscible(), TestSystems.Temperature, DistributionIsotherm.Table(Isotherm));

    [Fact]
    public void Split_ConstantK_SolvesTheSoluteBalanceInClosedForm()
    {
        // 10 solute, 80 diluent, 40 solvent, k 2: X = A / (D + k S) = 10 / 160 (solute balance, common practice, no source).
        DistributionModel model = TestSystems.ConstantK(2);
        PhaseSplit split = model.Split(new Ternary(10, 80, 40).Normalized(), TestSystems.Temperature);
        double x = 10.0 / 160;
        Assert.True(split.IsTwoPhase);
        Assert.Equal(x / (1 + x), split.Raffinate.Solute, 14);
        Assert.Equal(0, split.Raffinate.Solvent);
        Assert.Equal(0, split.Extract.Diluent);
        Assert.Equal(2 * x / (1 + (2 * x)), split.Extract.Solute, 14);
        Assert.Equal(40 * (1 + (2 * x)) / 130, split.ExtractFraction, 12);
    }

    [Fact]
    public void Split_Table_ClosesTheBalanceOnTheIsotherm()
    {
        DistributionModel model = TableModel();
        var overall = new Ternary(0.08, 0.6, 0.32);
        PhaseSplit split = model.Split(overall, TestSystems.Temperature);
        Ternary back = ((1 - split.ExtractFraction) * split.Raffinate) + (split.ExtractFraction * split.Extract);
        Assert.True(Ternary.MaxDifference(overall, back) < 1e-12);
        double x = split.Raffinate.Solute / split.Raffinate.Diluent, y = split.Extract.Solute / split.Extract.Solvent;
        Assert.Equal(model.ExtractRatio(x), y, 12);
    }

    [Fact]
    public void ExtractRatio_Table_PassesThroughEveryPointAndRises()
    {
        DistributionModel model = TableModel();
        foreach ((double x, double y) in Isotherm)
        {
            Assert.Equal(y, model.ExtractRatio(x), 13);
        }

        double previous = -1;
        for (double x = 0; x <= 0.4; x += 0.001)
        {
            double y = model.ExtractRatio(x);
            Assert.True(y > previous, $"Y({x}) = {y} does not rise");
            Assert.Equal(x, model.RaffinateRatio(y), 11);
            previous = y;
        }
    }

    [Fact]
    public void ExtractRatio_BeyondTable_ExtrapolatesAlongTheLastChord()
    {
        DistributionModel model = TableModel();
        Assert.Equal(0.30 + (0.11 * 1.0), model.ExtractRatio(0.30), 12);
    }

    [Fact]
    public void TieLineFromExtract_InvertsTieLineFromRaffinate()
    {
        DistributionModel model = TableModel();
        TieLine a = model.TieLineFromRaffinate(0.07, TestSystems.Temperature);
        TieLine b = model.TieLineFromExtract(a.Extract.Solute, TestSystems.Temperature);
        Assert.True(Ternary.MaxDifference(a.Raffinate, b.Raffinate) < 1e-12);
    }

    [Theory]
    [InlineData(0.2, 0.8, 0.0)] // no solvent
    [InlineData(0.2, 0.0, 0.8)] // no diluent
    [InlineData(1.0, 0.0, 0.0)] // pure solute
    public void Split_MixtureMissingDiluentOrSolvent_IsOnePhase(double a, double d, double s)
    {
        PhaseSplit split = TestSystems.ConstantK(1.5).Split(new Ternary(a, d, s), TestSystems.Temperature);
        Assert.False(split.IsTwoPhase);
    }

    [Fact]
    public void Split_NoSolute_GivesPureDiluentAndSolvent()
    {
        PhaseSplit split = TableModel().Split(new Ternary(0, 0.5, 0.5), TestSystems.Temperature);
        Assert.True(split.IsTwoPhase);
        Assert.Equal(0, split.Raffinate.Solute);
        Assert.Equal(0, split.Extract.Solute);
        Assert.Equal(0.5, split.ExtractFraction, 14);
    }

    [Fact]
    public void Constructor_TableStartingAtZeroWithSolute_Throws()
    {
        var ex = Assert.Throws<ArgumentException>(() => new DistributionModel(TestSystems.Immiscible(), 298.15, DistributionIsotherm.Table([(0, 0.01), (0.1, 0.2)])));
        Assert.Contains("isotherm[0]", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(1.0)]
    [InlineData(-0.1)]
    [InlineData(double.NaN)]
    public void TieLineFromRaffinate_FractionOutsideRange_Throws(double x)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => TestSystems.ConstantK(1).TieLineFromRaffinate(x, 298.15));
    }
}
