using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>
/// Cascades on a constant distribution coefficient against the Kremser equations (Kremser, Natl. Petroleum News 22,
/// 1930; as given in standard mass-transfer texts, e.g. Treybal, Mass-Transfer Operations, 3rd ed., 1980, ch. 10):
/// with immiscible carrier and solvent, Y = m X, extraction factor eps = m S'/F' and solute-free solvent, the fraction
/// of the feed's solute not extracted by N counter-current stages is (eps - 1) / (eps^(N+1) - 1), or 1 / (N + 1) at
/// eps = 1; by N cross-current stages with fresh solvent S'_k it is the product of 1 / (1 + m S'_k / F').
/// </summary>
public sealed class KremserTests
{
    private static double CountercurrentUnextracted(double eps, int n) =>
        Math.Abs(eps - 1) < 1e-12 ? 1.0 / (n + 1) : (eps - 1) / (Math.Pow(eps, n + 1) - 1);

    [Theory]
    [InlineData(1.5, 1000.0, 750.0, 5)] // eps 1.125
    [InlineData(1.0, 1000.0, 1000.0, 3)] // eps 1
    [InlineData(0.5, 1000.0, 1000.0, 4)] // eps 0.5
    [InlineData(2.0, 1000.0, 1500.0, 8)] // eps 3
    [InlineData(1.2, 500.0, 400.0, 1)] // eps 0.96, one stage
    public void SolveCountercurrent_ConstantK_MatchesKremser(double m, double carrier, double solvent, int n)
    {
        var solver = new CascadeSolver(TestSystems.ConstantK(m), TestSystems.Temperature);
        CascadeResult result = solver.SolveCountercurrent(TestSystems.CarrierFeed(carrier, 0.10), TestSystems.SolventStream(solvent), n, 1.0);

        double expected = 0.10 * CountercurrentUnextracted(m * solvent / carrier, n);
        double actual = TestSystems.RaffinateRatio(result.Raffinate);
        Assert.Equal(CascadeStatus.Converged, result.Status);
        Assert.True(Math.Abs(actual - expected) <= 1e-6 * expected, $"X_N {actual} against Kremser {expected}");
    }

    [Fact]
    public void SolveCountercurrent_PrintedCheck_GivesXn0012168()
    {
        // docs/reference-data.md §5 (computed check): F' 1000, S' 750, m 1.5, X_F 0.10, pure solvent, N 5: X_N = 0.012168.
        var solver = new CascadeSolver(TestSystems.ConstantK(1.5), TestSystems.Temperature);
        CascadeResult result = solver.SolveCountercurrent(TestSystems.CarrierFeed(1000, 0.10), TestSystems.SolventStream(750), 5, 1.0);
        Assert.Equal(0.012168, TestSystems.RaffinateRatio(result.Raffinate), 6);
    }

    [Fact]
    public void SolveCountercurrent_PrintedCheckExtractionFactorOne_GivesXn0025()
    {
        // docs/reference-data.md §5 (computed check): F' = S' = 1000, m 1, N 3: X_N = 0.025.
        var solver = new CascadeSolver(TestSystems.ConstantK(1.0), TestSystems.Temperature);
        CascadeResult result = solver.SolveCountercurrent(TestSystems.CarrierFeed(1000, 0.10), TestSystems.SolventStream(1000), 3, 1.0);
        Assert.True(Math.Abs(TestSystems.RaffinateRatio(result.Raffinate) - 0.025) <= 1e-6 * 0.025);
    }

    [Theory]
    [InlineData(1.5, 1000.0, 750.0, 5)]
    [InlineData(1.0, 1000.0, 1000.0, 3)]
    [InlineData(0.5, 1000.0, 300.0, 4)]
    [InlineData(3.0, 200.0, 50.0, 1)]
    public void SolveCrosscurrent_ConstantK_MatchesKremserProduct(double m, double carrier, double solventPerStage, int n)
    {
        var solver = new CascadeSolver(TestSystems.ConstantK(m), TestSystems.Temperature);
        CascadeResult result = solver.SolveCrosscurrent(TestSystems.CarrierFeed(carrier, 0.10), TestSystems.SolventStream(solventPerStage), n, 1.0);

        double expected = 0.10 * Math.Pow(1 / (1 + (m * solventPerStage / carrier)), n);
        double actual = TestSystems.RaffinateRatio(result.Raffinate);
        Assert.True(Math.Abs(actual - expected) <= 1e-6 * expected, $"X_N {actual} against Kremser {expected}");
        Assert.Equal(1 - (actual / 0.10), result.Recovery, 9);
    }

    [Fact]
    public void SolveCountercurrent_MoleBasis_MatchesKremserOnMoleRatios()
    {
        // Same Kremser relation with X, Y in kmol per kmol on a mole-basis system.
        var solver = new CascadeSolver(TestSystems.ConstantK(1.5, CompositionBasis.Mole), TestSystems.Temperature);
        CascadeResult result = solver.SolveCountercurrent(TestSystems.CarrierFeed(50, 0.10), TestSystems.SolventStream(37.5), 5, 1.0);
        Assert.True(Math.Abs(TestSystems.RaffinateRatio(result.Raffinate) - (0.10 * CountercurrentUnextracted(1.125, 5))) <= 1e-7);
    }

    [Fact]
    public void SolveCountercurrent_LinearTableIsotherm_MatchesKremser()
    {
        // Points on Y = 1.5 X: the monotone cubic reproduces a straight line, so the table path meets Kremser as well.
        var model = new Tieflow.Core.Equilibrium.Distribution.DistributionModel(
            TestSystems.Immiscible(), TestSystems.Temperature, Tieflow.Core.Equilibrium.Distribution.DistributionIsotherm.Table([(0.01, 0.015), (0.04, 0.06), (0.08, 0.12), (0.12, 0.18)]));
        CascadeResult result = new CascadeSolver(model, TestSystems.Temperature).SolveCountercurrent(TestSystems.CarrierFeed(1000, 0.10), TestSystems.SolventStream(750), 5, 1.0);
        Assert.True(Math.Abs(TestSystems.RaffinateRatio(result.Raffinate) - 0.012168) < 5e-7, $"X_N {TestSystems.RaffinateRatio(result.Raffinate)}");
    }
}
