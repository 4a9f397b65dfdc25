using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>
/// Design advice that is true, on the acetone - water - 1,1,2-trichloroethane tie lines at 25 C (ReferenceTables:
/// Treybal, Weber and Daley, Ind. Eng. Chem. 38, 817, 1946), feed 1000 kg/h of 30 % acetone, pure solvent.
/// </summary>
public sealed class CascadeDesignAdviceTests
{
    private static readonly MaterialStream Feed = new(1000, new Ternary(0.3, 0.7, 0));
    private static readonly Ternary PureSolvent = new(0, 0, 1);

    private static CascadeDesign Design() =>
        new(new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C), 298.15);

    [Fact]
    public void FindSolvent_EasyTarget_IsFoundAndMet()
    {
        // 1 % recovery: a fraction of a stage does it; the search must not start above the answer.
        DesignResult result = Design().FindSolvent(Feed, PureSolvent, 4, DesignTarget.Recovery(0.01), 0.9);
        Assert.Equal(0.01, result.Cascade.Recovery, 1e-8);
        Assert.True(result.SolventFlow >= result.MinimumSolventFlow);
    }

    [Fact]
    public void FindMinimumSolvent_EasyTarget_IsBelowAFlowThatMeetsIt()
    {
        // Four stages at 20 kg/h already recover more than 1 %, so the minimum for 1 % is below 20 kg/h.
        var solver = new CascadeSolver(new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C), 298.15);
        Assert.True(solver.SolveCountercurrent(Feed, new MaterialStream(20, PureSolvent), 4, 0.9).Recovery > 0.01);
        Assert.True(Design().FindMinimumSolvent(Feed, PureSolvent, DesignTarget.Recovery(0.01)).MinimumSolventFlow < 20);
    }

    [Theory]
    [InlineData(1, 0.95)]
    [InlineData(4, 0.999999999999)]
    public void FindSolvent_TargetBeyondTheStages_SaysSoWithTheBestReachable(int stages, double recovery)
    {
        var e = Assert.Throws<InfeasibleSpecificationException>(() => Design().FindSolvent(Feed, PureSolvent, stages, DesignTarget.Recovery(recovery), 0.9));
        Assert.Contains("cannot reach", e.Message);
        Assert.Contains("the best they reach is a recovery of", e.Message);
        Assert.DoesNotContain("Lower the solvent flow", e.Message);
    }
}
