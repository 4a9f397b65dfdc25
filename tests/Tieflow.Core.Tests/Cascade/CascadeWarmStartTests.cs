using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Tests.Monitoring;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>
/// The analysis solves a unit's cascade many times per window for nearby efficiencies (the soft sensor's sigma, the
/// shared-efficiency fit), each from the profile of the solve before: the answers must be those of a solve from the
/// split of feed plus solvent, as the analysis took them before.
/// </summary>
public sealed class CascadeWarmStartTests
{
    public static TheoryData<string, double, double> Cases => new()
    {
        // model, feed solute fraction, solvent to feed
        { "tie-lines", 0.3, 0.45 },
        { "tie-lines", 0.2, 0.8 },
        { "k", 0.012, 0.5 },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Solve_FromANearbyProfile_EqualsTheColdSolve(string kind, double feedSolute, double ratio)
    {
        (IPhaseEquilibrium model, double temperature) = kind switch
        {
            "tie-lines" => ((IPhaseEquilibrium)DemoUnits.Model, 298.15),
            _ => (TestSystems.ConstantK(3.5), TestSystems.Temperature),
        };
        var feed = new MaterialStream(1000, new Ternary(feedSolute, 1 - feedSolute, 0));
        var solvent = new MaterialStream(1000 * ratio, new Ternary(0, 0, 1));
        var solver = new CascadeSolver(model, temperature);
        double[] central = [0.92, 0.9, 0.9, 0.88];
        CascadeResult near = solver.Solve(CascadeArrangement.Countercurrent, feed, solvent, central);
        for (int k = 0; k <= central.Length; k++)
        {
            // Each efficiency raised as the soft sensor raises it, and all of them lowered as a fit's bracket end does.
            double[] eff = [.. central];
            if (k < central.Length)
            {
                eff[k] = Math.Min(1, eff[k] + 0.05);
            }
            else
            {
                Array.Fill(eff, 0.3);
            }

            CascadeResult cold = solver.Solve(CascadeArrangement.Countercurrent, feed, solvent, eff);
            CascadeResult warm = solver.Solve(CascadeArrangement.Countercurrent, feed, solvent, eff, near);
            Assert.Equal(CascadeStatus.Converged, warm.Status);
            Assert.Equal(cold.Raffinate.Composition.Solute, warm.Raffinate.Composition.Solute, 1e-10);
            Assert.Equal(cold.Raffinate.Flow, warm.Raffinate.Flow, 1e-7);
            Assert.Equal(cold.Extract.Composition.Solute, warm.Extract.Composition.Solute, 1e-10);
            Assert.True(warm.Iterations <= cold.Iterations, $"warm {warm.Iterations}, cold {cold.Iterations} iterations");
        }
    }

    [Theory]
    [InlineData(0.3, 450, 0.1)]
    [InlineData(0.3, 450, 0.05)]
    [InlineData(0.2, 700, 0.02)]
    public void FindFractionalStages_EqualsTheFullDesign(double feedSolute, double solventFlow, double target)
    {
        var design = new CascadeDesign(DemoUnits.Model, 298.15);
        var feed = new MaterialStream(1000, new Ternary(feedSolute, 1 - feedSolute, 0));
        var solvent = new MaterialStream(solventFlow, new Ternary(0, 0, 1));
        DesignTarget t = DesignTarget.RaffinateFraction(target);
        Assert.Equal(design.FindStages(feed, solvent, t).FractionalStages, design.FindFractionalStages(feed, solvent, t, [1.0]));
    }

    [Fact]
    public void FindFractionalStages_Infeasible_ThrowsAsTheFullDesign()
    {
        var design = new CascadeDesign(DemoUnits.Model, 298.15);
        var feed = new MaterialStream(1000, new Ternary(0.3, 0.7, 0));
        var solvent = new MaterialStream(20, new Ternary(0, 0, 1));
        Assert.Throws<InfeasibleSpecificationException>(() => design.FindFractionalStages(feed, solvent, DesignTarget.RaffinateFraction(0.01), [1.0]));
    }
}
