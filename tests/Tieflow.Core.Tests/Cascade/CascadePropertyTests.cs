using FsCheck;
using FsCheck.Fluent;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Distribution;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>Invariants of stages and cascades on every model kind, with fixed seeds and counts.</summary>
public sealed class CascadePropertyTests
{
    private static readonly IPhaseEquilibrium[] Models =
    [
        TestSystems.ConstantK(1.3),
        new DistributionModel(TestSystems.Immiscible(CompositionBasis.Mole), TestSystems.Temperature, DistributionIsotherm.Table([(0.02, 0.05), (0.05, 0.11), (0.10, 0.19), (0.20, 0.30)])),
        new TieLineTableModel(ReferenceTables.IsopropylEtherSystem, 293.15, ReferenceTables.IsopropylEtherAceticAcidWater20C),
        new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C),
    ];

    /// <summary>A random case: model, feed, solvent, efficiencies, arrangement.</summary>
    private static Gen<(int Model, double FeedSolute, double SolventRatio, double[] Efficiencies, bool Countercurrent)> Cases() =>
        from model in Gen.Choose(0, Models.Length - 1)
        from solute in Gen.Choose(1, 30)
        from ratio in Gen.Choose(5, 40)
        from stages in Gen.Choose(1, 7)
        from effs in Gen.ArrayOf(Gen.Choose(5, 100), stages)
        from counter in Gen.Elements(true, false)
        select (model, solute / 100.0, ratio / 10.0, effs.Select(e => e / 100.0).ToArray(), counter);

    private static CascadeResult Solve((int Model, double FeedSolute, double SolventRatio, double[] Efficiencies, bool Countercurrent) c, out MaterialStream feed, out MaterialStream solvent)
    {
        IPhaseEquilibrium model = Models[c.Model];
        feed = new MaterialStream(100, new Ternary(c.FeedSolute, 1 - c.FeedSolute, 0));
        solvent = new MaterialStream(100 * c.SolventRatio / (c.Countercurrent ? 1 : c.Efficiencies.Length), new Ternary(0, 0, 1));
        var solver = new CascadeSolver(model, TemperatureOf(model));
        return c.Countercurrent ? solver.SolveCountercurrent(feed, solvent, c.Efficiencies) : solver.SolveCrosscurrent(feed, solvent, c.Efficiencies);
    }

    private static double TemperatureOf(IPhaseEquilibrium model) => 0.5 * (model.ValidTemperatures.MinKelvin + model.ValidTemperatures.MaxKelvin);

    /// <summary>Largest component imbalance of any stage relative to the stage's inflow, computed from the streams.</summary>
    private static double WorstStageImbalance(CascadeResult r, MaterialStream feed, MaterialStream solvent)
    {
        double worst = 0;
        int n = r.Stages.Count;
        for (int k = 0; k < n; k++)
        {
            MaterialStream raffinateIn = k == 0 ? feed : r.Stages[k - 1].Raffinate;
            MaterialStream extractIn = r.Arrangement == CascadeArrangement.Crosscurrent || k == n - 1 ? solvent : r.Stages[k + 1].Extract;
            Ternary imbalance = raffinateIn.ComponentFlows + extractIn.ComponentFlows - r.Stages[k].Raffinate.ComponentFlows - r.Stages[k].Extract.ComponentFlows;
            worst = Math.Max(worst, Ternary.MaxDifference(imbalance, default) / (raffinateIn.Flow + extractIn.Flow));
        }

        return worst;
    }

    [FsCheck.Xunit.Property(MaxTest = 120, Replay = "(101,103)")]
    public Property Solve_AnyCascade_ClosesEveryComponentBalance()
    {
        return Prop.ForAll(Cases().ToArbitrary(), c =>
        {
            CascadeResult r = Solve(c, out MaterialStream feed, out MaterialStream solvent);
            double stageImbalance = WorstStageImbalance(r, feed, solvent);
            Ternary overall = feed.ComponentFlows + ((c.Countercurrent ? 1 : c.Efficiencies.Length) * solvent.ComponentFlows) - r.Raffinate.ComponentFlows - r.Extract.ComponentFlows;
            double overallImbalance = Ternary.MaxDifference(overall, default) / (feed.Flow + (100 * c.SolventRatio));
            return (stageImbalance <= 1e-9 && overallImbalance <= 1e-9).Label($"stage {stageImbalance:G3}, overall {overallImbalance:G3}");
        });
    }

    [FsCheck.Xunit.Property(MaxTest = 120, Replay = "(107,109)")]
    public Property Solve_AnyCascade_HoldsTheMurphreeEfficiencyOnEveryStage()
    {
        return Prop.ForAll(Cases().ToArbitrary(), c =>
        {
            CascadeResult r = Solve(c, out MaterialStream feed, out _);
            double worst = 0;
            for (int k = 0; k < r.Stages.Count; k++)
            {
                double xIn = k == 0 ? feed.Composition.Solute : r.Stages[k - 1].Raffinate.Composition.Solute;
                StageResult s = r.Stages[k];
                double expected = xIn - (c.Efficiencies[k] * (xIn - s.EquilibriumRaffinateSoluteFraction));
                worst = Math.Max(worst, Math.Abs(s.Raffinate.Composition.Solute - expected));
            }

            return (worst <= 1e-9).Label($"Murphree residual {worst:G3}");
        });
    }

    [FsCheck.Xunit.Property(MaxTest = 80, Replay = "(113,127)")]
    public Property Solve_EfficiencyOne_GivesTheEquilibriumSplitOfEveryStageMixture()
    {
        return Prop.ForAll(Cases().ToArbitrary(), c =>
        {
            c.Efficiencies = [.. c.Efficiencies.Select(_ => 1.0)];
            CascadeResult r = Solve(c, out MaterialStream feed, out MaterialStream solvent);
            IPhaseEquilibrium model = Models[c.Model];
            double worst = 0;
            int n = r.Stages.Count;
            for (int k = 0; k < n; k++)
            {
                MaterialStream raffinateIn = k == 0 ? feed : r.Stages[k - 1].Raffinate;
                MaterialStream extractIn = r.Arrangement == CascadeArrangement.Crosscurrent || k == n - 1 ? solvent : r.Stages[k + 1].Extract;
                PhaseSplit split = model.Split(MaterialStream.Mix([raffinateIn, extractIn]).Composition, TemperatureOf(model));
                worst = Math.Max(worst, Math.Max(Ternary.MaxDifference(split.Raffinate, r.Stages[k].Raffinate.Composition), Ternary.MaxDifference(split.Extract, r.Stages[k].Extract.Composition)));
            }

            return (worst <= 1e-8).Label($"largest difference from the equilibrium split {worst:G3}");
        });
    }

    [FsCheck.Xunit.Property(MaxTest = 60, Replay = "(131,137)")]
    public Property SolveStage_EfficiencyNearZero_TransfersAlmostNoSolute()
    {
        // Saturated inlets (a raffinate-branch point and an extract-branch point): with E near 0 the raffinate keeps its
        // solute fraction, so the stage changes almost nothing. (An unsaturated feed on a partially miscible system has no
        // solution at E near 0: it would take up solvent and leave with more solute than entered.)
        return Prop.ForAll(Cases().ToArbitrary(), Gen.Choose(0, 20).ToArbitrary(), (c, extractTenths) =>
        {
            IPhaseEquilibrium model = Models[c.Model];
            double t = TemperatureOf(model);
            double xIn = Math.Min(c.FeedSolute, 0.9 * model.SoluteLimits(t).Raffinate);
            double yIn = 0.1 * extractTenths / 20 * Math.Min(1, model.SoluteLimits(t).Extract);
            var raffinateIn = new MaterialStream(100, model.TieLineFromRaffinate(xIn, t).Raffinate);
            var extractIn = new MaterialStream(100 * c.SolventRatio, model.TieLineFromExtract(yIn, t).Extract);
            const double E = 1e-7;
            StageResult stage = new CascadeSolver(model, t).SolveStage(raffinateIn, extractIn, E);

            double soluteMoved = Math.Abs(stage.Raffinate.ComponentFlows.Solute - raffinateIn.ComponentFlows.Solute);
            double flowChange = Math.Abs(stage.Raffinate.Flow - raffinateIn.Flow);
            return (soluteMoved <= 1e-5 * raffinateIn.ComponentFlows.Solute && flowChange <= 1e-5 * raffinateIn.Flow)
                .Label($"solute moved {soluteMoved:G3}, raffinate flow change {flowChange:G3}");
        });
    }

    [Fact]
    public void SolveStage_UnsaturatedFeedAtTinyEfficiency_SaysToRaiseTheEfficiency()
    {
        IPhaseEquilibrium model = Models[2];
        var ex = Assert.Throws<CascadeException>(() => new CascadeSolver(model, 293.15).SolveStage(new MaterialStream(100, new Ternary(0.3, 0.7, 0)), new MaterialStream(300, new Ternary(0, 0, 1)), 1e-7));
        Assert.Contains("raise the stage efficiency", ex.Message, StringComparison.Ordinal);
    }

    [FsCheck.Xunit.Property(MaxTest = 40, Replay = "(139,149)")]
    public Property SolveCountercurrent_Nrtl_ClosesBalancesAndHoldsEfficiencies()
    {
        // Ethyl acetate - water - ethanol NRTL (ReferenceNrtl) at 343 K, mole basis: feeds of 1 to 12% ethanol, solvent
        // 0.3 to 1.2 times the feed (much more dissolves the water-rich feed).
        var cases =
            from solute in Gen.Choose(1, 12)
            from ratio in Gen.Choose(3, 12)
            from stages in Gen.Choose(1, 8)
            from effs in Gen.ArrayOf(Gen.Choose(30, 100), stages)
            select (solute / 100.0, ratio / 10.0, effs.Select(e => e / 100.0).ToArray());
        return Prop.ForAll(cases.ToArbitrary(), c =>
        {
            (double solute, double ratio, double[] effs) = c;
            var feed = new MaterialStream(100, new Ternary(solute, 1 - solute, 0));
            var solvent = new MaterialStream(100 * ratio, new Ternary(0, 0, 1));
            CascadeResult r = new CascadeSolver(Nrtl, 343).SolveCountercurrent(feed, solvent, effs);
            double worstMurphree = 0;
            for (int k = 0; k < r.Stages.Count; k++)
            {
                double xIn = k == 0 ? solute : r.Stages[k - 1].Raffinate.Composition.Solute;
                double expected = xIn - (effs[k] * (xIn - r.Stages[k].EquilibriumRaffinateSoluteFraction));
                worstMurphree = Math.Max(worstMurphree, Math.Abs(r.Stages[k].Raffinate.Composition.Solute - expected));
            }

            double imbalance = WorstStageImbalance(r, feed, solvent);
            return (imbalance <= 1e-9 && worstMurphree <= 1e-9 && r.Status == CascadeStatus.Converged).Label($"imbalance {imbalance:G3}, Murphree {worstMurphree:G3}");
        });
    }

    [FsCheck.Xunit.Property(MaxTest = 25, Replay = "(151,157)")]
    public Property SolveCountercurrent_NrtlEfficiencyOne_GivesEquilibriumSplits()
    {
        var cases = from solute in Gen.Choose(1, 12) from ratio in Gen.Choose(3, 12) from stages in Gen.Choose(1, 8) select (solute / 100.0, ratio / 10.0, stages);
        return Prop.ForAll(cases.ToArbitrary(), c =>
        {
            (double solute, double ratio, int stages) = c;
            var feed = new MaterialStream(100, new Ternary(solute, 1 - solute, 0));
            var solvent = new MaterialStream(100 * ratio, new Ternary(0, 0, 1));
            CascadeResult r = new CascadeSolver(Nrtl, 343).SolveCountercurrent(feed, solvent, stages, 1.0);
            double worst = 0;
            for (int k = 0; k < stages; k++)
            {
                MaterialStream raffinateIn = k == 0 ? feed : r.Stages[k - 1].Raffinate;
                MaterialStream extractIn = k == stages - 1 ? solvent : r.Stages[k + 1].Extract;
                PhaseSplit split = Nrtl.Split(MaterialStream.Mix([raffinateIn, extractIn]).Composition, 343);
                worst = Math.Max(worst, Math.Max(Ternary.MaxDifference(split.Raffinate, r.Stages[k].Raffinate.Composition), Ternary.MaxDifference(split.Extract, r.Stages[k].Extract.Composition)));
            }

            return (worst <= 1e-8).Label($"largest difference from the equilibrium split {worst:G3}");
        });
    }

    private static readonly IPhaseEquilibrium Nrtl = ReferenceNrtl.Model();
}
