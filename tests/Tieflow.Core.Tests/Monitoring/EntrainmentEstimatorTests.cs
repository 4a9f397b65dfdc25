using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Monitoring.Envelope;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class EntrainmentEstimatorTests
{
    private const double T = 298.15;

    [Theory]
    [InlineData(0.01)]
    [InlineData(0.02)]
    [InlineData(0.05)]
    public void ExtractCarryingRaffinate_LeverRuleGivesTheCarriedShare(double carried)
    {
        // A point on a tie line of the published table: z = (1 - f) e + f r carries the share f of raffinate phase.
        TieLine line = DemoUnits.Model.TieLineFromExtract(0.2, T);
        Ternary z = ((1 - carried) * line.Extract) + (carried * line.Raffinate);

        EntrainmentEstimate e = EntrainmentEstimator.Estimate(DemoUnits.Model, T, shouldBeExtract: true, z.Solute, 0.0005, z.Diluent, 0.0005);

        Assert.True(e.Detected);
        Assert.Equal(carried, e.Fraction, 0.002);
        Assert.InRange(e.Sigma, 1e-5, 0.005);
    }

    [Fact]
    public void RaffinateCarryingExtract_LeverRuleGivesTheCarriedShare()
    {
        TieLine line = DemoUnits.Model.TieLineFromRaffinate(0.08, T);
        Ternary z = (0.99 * line.Raffinate) + (0.01 * line.Extract);

        EntrainmentEstimate e = EntrainmentEstimator.Estimate(DemoUnits.Model, T, shouldBeExtract: false, z.Solute, 0.0005, z.Solvent, 0.00015);

        Assert.True(e.Detected);
        Assert.Equal(0.01, e.Fraction, 0.002);
    }

    [Fact]
    public void SaturatedPhase_ShowsNoEntrainment()
    {
        Ternary e = DemoUnits.Model.TieLineFromExtract(0.25, T).Extract;
        EntrainmentEstimate est = EntrainmentEstimator.Estimate(DemoUnits.Model, T, shouldBeExtract: true, e.Solute, 0.001, e.Diluent, 0.0003);

        Assert.False(est.Detected);
        Assert.Equal(0, est.Fraction);
        Assert.True(est.Sigma > 0);
    }
}
