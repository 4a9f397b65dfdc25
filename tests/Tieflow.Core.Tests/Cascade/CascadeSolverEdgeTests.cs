using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>Edge cases of stages and cascades: one stage, pure solvent, no solute, a list of stage efficiencies.</summary>
public sealed class CascadeSolverEdgeTests
{
    private static IPhaseEquilibrium Model(string kind) => kind switch
    {
        "k" => TestSystems.ConstantK(1.5),
        "ipe" => new TieLineTableModel(ReferenceTables.IsopropylEtherSystem, 293.15, ReferenceTables.IsopropylEtherAceticAcidWater20C),
        "nrtl" => ReferenceNrtl.Model(),
        _ => throw new ArgumentOutOfRangeException(nameof(kind)),
    };

    private static double Temperature(string kind) => kind switch { "ipe" => 293.15, "nrtl" => 343, _ => TestSystems.Temperature };

    public static TheoryData<string, string, double, double[]> Cases => new()
    {
        // model, case, feed solute fraction, efficiencies
        { "k", "one stage", 0.1, [1.0] },
        { "ipe", "one stage", 0.3, [0.8] },
        { "nrtl", "one stage", 0.05, [1.0] },
        { "k", "pure solvent", 0.1, [1.0, 1.0, 1.0] },
        { "ipe", "pure solvent", 0.3, [1.0, 1.0, 1.0, 1.0] },
        { "k", "no solute", 0.0, [1.0, 0.7] },
        { "ipe", "no solute", 0.0, [1.0, 0.7, 0.9] },
        { "nrtl", "no solute", 0.0, [0.9, 0.9] },
        { "k", "efficiency list", 0.1, [1.0, 0.5, 0.8, 0.3] },
        { "ipe", "efficiency list", 0.3, [0.95, 0.6, 0.85] },
        { "nrtl", "efficiency list", 0.08, [1.0, 0.4, 0.7, 0.9, 1.0, 0.55] },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void SolveCountercurrent_EdgeCase_ClosesBalancesAndHoldsEfficiencies(string kind, string label, double feedSolute, double[] efficiencies)
    {
        IPhaseEquilibrium model = Model(kind);
        double t = Temperature(kind);
        var feed = new MaterialStream(100, new Ternary(feedSolute, 1 - feedSolute, 0));
        // Water dissolves well in ethyl acetate at 343 K: less solvent keeps every stage two-phase.
        var solvent = new MaterialStream(kind == "nrtl" ? 60 : 150, new Ternary(0, 0, 1));
        var solver = new CascadeSolver(model, t);
        CascadeResult counter = solver.SolveCountercurrent(feed, solvent, efficiencies);
        CascadeResult cross = solver.SolveCrosscurrent(feed, new MaterialStream(solvent.Flow / efficiencies.Length, solvent.Composition), efficiencies);

        foreach (CascadeResult r in new[] { counter, cross })
        {
            Assert.True(r.BalanceResidual <= 1e-9, $"{label}: balance residual {r.BalanceResidual}");
            Assert.Equal(efficiencies.Length, r.Stages.Count);
            for (int k = 0; k < r.Stages.Count; k++)
            {
                double xIn = k == 0 ? feedSolute : r.Stages[k - 1].Raffinate.Composition.Solute;
                StageResult s = r.Stages[k];
                Assert.Equal(efficiencies[k], s.Efficiency);
                Assert.True(Math.Abs(s.Raffinate.Composition.Solute - (xIn - (efficiencies[k] * (xIn - s.EquilibriumRaffinateSoluteFraction)))) <= 1e-9, $"{label}: Murphree relation at stage {k + 1}");
            }

            if (feedSolute == 0)
            {
                Assert.Equal(0, r.Recovery);
                Assert.True(r.Raffinate.Composition.Solute <= 1e-12 && r.Extract.Composition.Solute <= 1e-12, $"{label}: solute appeared");
            }
            else
            {
                Assert.InRange(r.Recovery, 0, 1);
            }
        }

        if (efficiencies.Length == 1)
        {
            // One stage: counter-current and cross-current are the same stage.
            Assert.True(Ternary.MaxDifference(counter.Raffinate.ComponentFlows, cross.Raffinate.ComponentFlows) <= 1e-8 * feed.Flow, $"{label}: one stage differs between arrangements");
        }
    }

    [Fact]
    public void SolveCountercurrent_LongNrtlCascade_ReachesSoluteTracesAndConverges()
    {
        // 39 equilibrium stages leave extract solute fractions near 1e-13 at the solvent end, below what the model's
        // own tie-line iteration resolves; the envelope interpolates such traces from the binary tie line.
        var feed = new MaterialStream(100, new Ternary(0.08, 0.92, 0));
        var solvent = new MaterialStream(129, new Ternary(0, 0, 1));
        CascadeResult r = new CascadeSolver(Model("nrtl"), 343).SolveCountercurrent(feed, solvent, 39, 1.0);
        Assert.Equal(CascadeStatus.Converged, r.Status);
        Assert.True(r.BalanceResidual <= 1e-9);
        Assert.True(r.Raffinate.Composition.Solute < 1e-9, $"raffinate {r.Raffinate.Composition.Solute}");
    }

    [Fact]
    public void TrySolveCountercurrent_IterationLimit_ReturnsFalseWithLastIterate()
    {
        var solver = new CascadeSolver(Model("ipe"), 293.15, new CascadeSolverOptions { MaxIterations = 1 });
        var feed = new MaterialStream(200, new Ternary(0.3, 0.7, 0));
        var ether = new MaterialStream(600, new Ternary(0, 0, 1));
        Assert.False(solver.TrySolveCountercurrent(feed, ether, [1.0, 1.0, 1.0, 1.0], out CascadeResult result));
        Assert.Equal(CascadeStatus.IterationLimit, result.Status);
        Assert.Equal(4, result.Stages.Count);
        var ex = Assert.Throws<CascadeException>(() => solver.SolveCountercurrent(feed, ether, 4, 1.0));
        Assert.Contains("did not converge in 1 iterations", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SolveCountercurrent_FeedAndSolventOnePhase_ThrowsSayingRaiseTheSolvent()
    {
        // A little ether dissolves in the acid-water feed: one liquid phase.
        IPhaseEquilibrium model = Model("ipe");
        var ex = Assert.Throws<CascadeException>(() => new CascadeSolver(model, 293.15).SolveCountercurrent(new MaterialStream(100, new Ternary(0.3, 0.7, 0)), new MaterialStream(0.5, new Ternary(0, 0, 1)), 3, 1.0));
        Assert.Contains("one liquid phase", ex.Message, StringComparison.Ordinal);
        Assert.Contains("Raise the solvent flow", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SolveCountercurrent_TooMuchSolventOnNrtl_ThrowsSayingLowerTheSolvent()
    {
        // At 343 K ethyl acetate takes up about a third of its amount of water (reference flash, docs/reference-data.md §3).
        var ex = Assert.Throws<CascadeException>(() => new CascadeSolver(Model("nrtl"), 343).SolveCountercurrent(new MaterialStream(100, new Ternary(0.04, 0.96, 0)), new MaterialStream(400, new Ternary(0, 0, 1)), 3, 1.0));
        Assert.Contains("Lower the solvent flow", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SolveStage_OnePhaseMixture_NamesTheStage()
    {
        var ex = Assert.Throws<CascadeException>(() => new CascadeSolver(Model("ipe"), 293.15).SolveCrosscurrent(new MaterialStream(100, new Ternary(0.3, 0.7, 0)), new MaterialStream(0.5, new Ternary(0, 0, 1)), 2, 1.0));
        Assert.StartsWith("Stage 1:", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(-1.0)]
    [InlineData(1.5)]
    [InlineData(double.NaN)]
    public void SolveCountercurrent_EfficiencyOutsideZeroToOne_ThrowsNamingTheStage(double efficiency)
    {
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => new CascadeSolver(Model("k"), 298.15).SolveCountercurrent(TestSystems.CarrierFeed(100, 0.1), TestSystems.SolventStream(100), [1.0, efficiency]));
        Assert.Contains("stage 2", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void SolveCountercurrent_FractionsNotSummingToOne_ThrowsNamingTheStream()
    {
        var ex = Assert.Throws<ArgumentException>(() => new CascadeSolver(Model("k"), 298.15).SolveCountercurrent(new MaterialStream(100, new Ternary(0.1, 0.8, 0)), TestSystems.SolventStream(100), 2, 1.0));
        Assert.Contains("feed", ex.Message, StringComparison.Ordinal);
    }
}
