using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Equilibrium;

/// <summary>
/// Where a point lies relative to the phase envelope, the measure entrainment detection will use: an extract that
/// carries a share of raffinate phase must show that share by the lever rule. Data: the water - acetone -
/// 1,1,2-trichloroethane tie lines at 25 C (Treybal, Weber and Daley, Ind. Eng. Chem. 38, 817 (1946), as tabulated in
/// Treybal, Mass-Transfer Operations, 3rd ed., ch. 10).
/// </summary>
public sealed class EnvelopePositionTests
{
    private static readonly TieLineTableModel Model = new(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C);

    [Theory]
    [InlineData(0.10, 0.02)]
    [InlineData(0.15, 0.05)]
    [InlineData(0.25, 0.10)]
    public void Locate_ExtractCarryingRaffinatePhase_ReportsTheCarriedShare(double raffinateSolute, double carried)
    {
        TieLine line = Model.TieLineFromRaffinate(raffinateSolute, 298.15);
        Ternary point = ((1 - carried) * line.Extract) + (carried * line.Raffinate);

        EnvelopePosition position = EnvelopePosition.Locate(Model, point, 298.15);

        Assert.True(position.Inside);
        Assert.Equal(carried, position.MinorPhaseFraction, 1e-9);
        Assert.Equal(carried * Ternary.MaxDifference(line.Extract, line.Raffinate), position.DistanceToNearerPhase, 1e-9);
    }

    [Fact]
    public void Locate_PointOnTheBinodal_IsAtTheEdge()
    {
        TieLine line = Model.TieLineFromRaffinate(0.12, 298.15);
        EnvelopePosition position = EnvelopePosition.Locate(Model, line.Extract, 298.15);
        Assert.True(position.MinorPhaseFraction < 1e-9);
    }

    [Fact]
    public void Locate_PointOutsideTheTwoPhaseRegion_IsOnePhase()
    {
        // 62% acetone lies above the plait point (about 0.58 acetone, the source's approximate value), where a
        // ternary mixture of this type is one liquid phase.
        var point = new Ternary(0.62, 0.2, 0.18);
        EnvelopePosition position = EnvelopePosition.Locate(Model, point, 298.15);
        Assert.False(position.Inside);
        Assert.Equal(0, position.MinorPhaseFraction);
    }
}
