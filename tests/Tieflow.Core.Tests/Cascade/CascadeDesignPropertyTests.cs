using FsCheck;
using FsCheck.Fluent;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Distribution;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Cascade;

/// <summary>Invariants of the design calculations, with fixed seeds and counts.</summary>
public sealed class CascadeDesignPropertyTests
{
    private static readonly IPhaseEquilibrium[] Models =
    [
        TestSystems.ConstantK(1.3),
        new DistributionModel(TestSystems.Immiscible(), TestSystems.Temperature, DistributionIsotherm.Table([(0.02, 0.05), (0.05, 0.11), (0.10, 0.19), (0.20, 0.30)])),
        new TieLineTableModel(ReferenceTables.IsopropylEtherSystem, 293.15, ReferenceTables.IsopropylEtherAceticAcidWater20C),
        new TieLineTableModel(ReferenceTables.TrichloroethaneSystem, 298.15, ReferenceTables.TrichloroethaneAcetoneWater25C),
    ];

    private static Gen<(int Model, double FeedSolute, double TargetShare, bool Recovery, double Efficiency)> Cases() =>
        from model in Gen.Choose(0, Models.Length - 1)
        from solute in Gen.Choose(5, 30)
        from share in Gen.Choose(5, 50)
        from recovery in Gen.Elements(false, true)
        from efficiency in Gen.Choose(50, 100)
        select (model, solute / 100.0, share / 100.0, recovery, efficiency / 100.0);

    private static (CascadeDesign Design, MaterialStream Feed, DesignTarget Target) Setup((int Model, double FeedSolute, double TargetShare, bool Recovery, double Efficiency) c)
    {
        IPhaseEquilibrium model = Models[c.Model];
        double t = 0.5 * (model.ValidTemperatures.MinKelvin + model.ValidTemperatures.MaxKelvin);
        var feed = new MaterialStream(100, new Ternary(c.FeedSolute, 1 - c.FeedSolute, 0));
        DesignTarget target = c.Recovery ? DesignTarget.Recovery(1 - c.TargetShare) : DesignTarget.RaffinateFraction(c.TargetShare * c.FeedSolute);
        return (new CascadeDesign(model, t, maxStages: 2000), feed, target);
    }

    private static readonly Ternary PureSolvent = new(0, 0, 1);

    [FsCheck.Xunit.Property(MaxTest = 12, Replay = "(211,223)")]
    public Property FindStages_SolventApproachingMinimum_StageCountRisesWithoutBound()
    {
        return Prop.ForAll(Cases().ToArbitrary(), c =>
        {
            (CascadeDesign design, MaterialStream feed, DesignTarget target) = Setup(c);
            double minimum = design.FindMinimumSolvent(feed, PureSolvent, target).MinimumSolventFlow;
            double[] stages = [.. new[] { 1e-1, 1e-2, 1e-3 }.Select(d => design.FindStages(feed, new MaterialStream(minimum * (1 + d), PureSolvent), target, c.Efficiency).FractionalStages)];
            bool rising = stages.Zip(stages.Skip(1)).All(p => p.Second > p.First);
            return (rising && stages[^1] > 1.5 * stages[0] && stages[^1] > stages[0] + 3).Label($"stages {string.Join(", ", stages.Select(s => s.ToString("F3", System.Globalization.CultureInfo.InvariantCulture)))}");
        });
    }

    [FsCheck.Xunit.Property(MaxTest = 15, Replay = "(227,229)")]
    public Property FindStages_MoreSolvent_FewerStages()
    {
        return Prop.ForAll(Cases().ToArbitrary(), c =>
        {
            (CascadeDesign design, MaterialStream feed, DesignTarget target) = Setup(c);
            double minimum = design.FindMinimumSolvent(feed, PureSolvent, target).MinimumSolventFlow;
            double[] stages = [.. new[] { 1.05, 1.2, 1.5, 2.0, 3.0 }.Select(f => design.FindStages(feed, new MaterialStream(minimum * f, PureSolvent), target, c.Efficiency).FractionalStages)];
            bool falling = stages.Zip(stages.Skip(1)).All(p => p.Second < p.First);
            return falling.Label($"stages {string.Join(", ", stages.Select(s => s.ToString("F3", System.Globalization.CultureInfo.InvariantCulture)))}");
        });
    }

    [FsCheck.Xunit.Property(MaxTest = 15, Replay = "(233,239)")]
    public Property FindStages_AnyFeasibleTarget_WholeStageCascadeMeetsIt()
    {
        return Prop.ForAll(Cases().ToArbitrary(), c =>
        {
            (CascadeDesign design, MaterialStream feed, DesignTarget target) = Setup(c);
            double minimum = design.FindMinimumSolvent(feed, PureSolvent, target).MinimumSolventFlow;
            DesignResult result = design.FindStages(feed, new MaterialStream(minimum * 1.3, PureSolvent), target, c.Efficiency);
            bool met = target.Kind == DesignTargetKind.Recovery
                ? result.Cascade.Recovery >= target.Value - 1e-9
                : result.Cascade.Raffinate.Composition.Solute <= target.Value + 1e-9;
            bool consistent = result.Stages == (int)Math.Ceiling(result.FractionalStages - 1e-9) && result.Cascade.Stages.Count == result.Stages;
            return (met && consistent).Label($"stages {result.Stages} ({result.FractionalStages:F4}), raffinate {result.Cascade.Raffinate.Composition.Solute:G6}, recovery {result.Cascade.Recovery:G6}");
        });
    }
}
