using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>
/// Warnings on the acetone - water - 1,1,2-trichloroethane tie lines at 25 C (ReferenceTables: Treybal, Weber and
/// Daley, Ind. Eng. Chem. 38, 817, 1946; lowest raffinate 0.0596 acetone), feed 1000 kg/h of 30 % acetone.
/// </summary>
public sealed class ResultWarningsTests
{
    private const double T = 298.15;
    private static readonly MaterialStream Feed = new(1000, new Ternary(0.3, 0.7, 0));

    private static TieLineTableModel Model() => new(ReferenceTables.TrichloroethaneSystem, T, ReferenceTables.TrichloroethaneAcetoneWater25C);

    [Fact]
    public void ForCascade_StagesBelowTheLowestTieLine_WarnPerStage()
    {
        var solvent = new MaterialStream(865, new Ternary(0, 0, 1));
        CascadeResult result = new CascadeSolver(Model(), T).SolveCountercurrent(Feed, solvent, 4, 0.9);
        IReadOnlyList<CascadeWarning> warnings = ResultWarnings.ForCascade(Model(), T, Feed, solvent, result);
        foreach (StageResult stage in result.Stages)
        {
            bool below = stage.Raffinate.Composition.Solute < 0.0596;
            Assert.Equal(below, warnings.Any(w => w.Code == "below-lowest-tie-line" && w.Stage == stage.Stage));
        }

        Assert.Contains(warnings, w => w.Stage == 4);
    }

    [Fact]
    public void ForCascade_LoadedSolvent_WarnsThatItLoadsTheRaffinate()
    {
        // A solvent with 60 % acetone: the raffinate leaves with more acetone than the feed brought (recovery < 0).
        var solvent = new MaterialStream(450, new Ternary(0.6, 0, 0.4));
        CascadeResult result = new CascadeSolver(Model(), T).SolveCountercurrent(Feed, solvent, 4, 0.9);
        Assert.True(result.Recovery < 0);
        Assert.Contains(ResultWarnings.ForCascade(Model(), T, Feed, solvent, result), w => w.Code == "solvent-loads-raffinate" && w.Message.Contains("kg/h"));
    }

    [Fact]
    public void ForDesign_CloseToTheMinimumSolvent_Warns()
    {
        var design = new CascadeDesign(Model(), T);
        double minimum = design.FindMinimumSolvent(Feed, new Ternary(0, 0, 1), DesignTarget.RaffinateFraction(0.1)).MinimumSolventFlow;
        DesignResult near = design.FindStages(Feed, new MaterialStream(1.1 * minimum, new Ternary(0, 0, 1)), DesignTarget.RaffinateFraction(0.1));
        DesignResult far = design.FindStages(Feed, new MaterialStream(2 * minimum, new Ternary(0, 0, 1)), DesignTarget.RaffinateFraction(0.1));
        Assert.Contains(ResultWarnings.ForDesign(Model(), T, Feed, new Ternary(0, 0, 1), near), w => w.Code == "near-minimum-solvent");
        Assert.DoesNotContain(ResultWarnings.ForDesign(Model(), T, Feed, new Ternary(0, 0, 1), far), w => w.Code == "near-minimum-solvent");
    }
}
