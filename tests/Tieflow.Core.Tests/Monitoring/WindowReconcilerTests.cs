using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Efficiency;
using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;
using Xunit.Abstractions;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class WindowReconcilerTests(ITestOutputHelper output)
{
    private static readonly double[] Efficiencies = [0.92, 0.9, 0.85, 0.8];

    [Fact]
    public void ExactReadingsOfASteadyTrain_GiveBackEveryStageEfficiency()
    {
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);

        WindowReconciliation r = new WindowReconciler(model).Reconcile(Readings(model, truth), 298.15);

        foreach (StageEfficiency e in r.Efficiencies)
        {
            output.WriteLine($"stage {e.Stage}: {e.Status} E = {e.Value:F6} +- {e.Sigma:F4} (driving force {e.DrivingForce:F4})");
            Assert.Equal(EfficiencyStatus.Determined, e.Status);
            Assert.Equal(Efficiencies[e.Stage - 1], e.Value, 1e-4);
            Assert.InRange(e.Sigma, 1e-4, 0.1);
        }

        output.WriteLine($"global test {r.Report.Final.GlobalTest.Statistic:G4} on {r.Report.Final.GlobalTest.DegreesOfFreedom} dof, {r.EnvelopeIterations} envelope iterations");
        Assert.True(r.Report.Final.GlobalTest.Passed);
        Assert.Empty(r.SuspectTags);
    }

    [Fact]
    public void TheEnvelopeMakesTheInterstageExtractsObservableAndAddsRedundancy()
    {
        // The count for an N-stage counter-current train with terminal flows, a raffinate analyzer per stage and a final
        // extract analyzer: with the binodal, the unknowns are the 2(N - 1) internal flows and the N - 1 internal extract
        // solutes, against 3N component balances, so 3N - 3(N - 1) = 3 degrees of redundancy remain. Without it the
        // internal extracts are unobservable and no stage efficiency can be estimated. (A counting argument of our own.)
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);
        IReadOnlyList<WindowMeasurement> readings = Readings(model, truth);

        WindowReconciliation with = new WindowReconciler(model).Reconcile(readings, 298.15);
        var noInterior = new HashSet<string>(model.Streams.Where(UnitModel.IsSaturatedPhase).Select(model.StreamId));
        WindowReconciliation without = new WindowReconciler(model).Reconcile(readings, 298.15, noInterior);

        int dofWith = with.Report.Final.GlobalTest.DegreesOfFreedom, dofWithout = without.Report.Final.GlobalTest.DegreesOfFreedom;
        output.WriteLine($"dof with the envelope {dofWith}, without {dofWithout}");
        Assert.All(with.Efficiencies, e => Assert.Equal(EfficiencyStatus.Determined, e.Status));
        Assert.Contains(without.Efficiencies, e => e.Status == EfficiencyStatus.NotObservable);
        Assert.Equal(3, dofWith);
        Assert.True(dofWithout < dofWith, $"with {dofWith}, without {dofWithout}");
    }

    [Fact]
    public void ABiasedFeedMeter_IsNamedAsTheSuspect()
    {
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);
        List<WindowMeasurement> readings = [.. Readings(model, truth)];
        int i = readings.FindIndex(m => m.Tag == "FI-301");
        readings[i] = readings[i] with { Value = readings[i].Value + (12 * readings[i].Sigma) };

        WindowReconciliation r = new WindowReconciler(model).Reconcile(readings, 298.15);

        Assert.False(r.Report.Initial.GlobalTest.Passed);
        Assert.Equal("FI-301", Assert.Single(r.SuspectTags));
    }

    /// <summary>Every instrument of the unit reading the solved cascade exactly, with the sigma of a 30-minute average.</summary>
    internal static IReadOnlyList<WindowMeasurement> Readings(UnitModel model, CascadeResult truth)
    {
        var list = new List<WindowMeasurement>();
        foreach (InstrumentBinding b in model.Bindings)
        {
            if (b.Key is not { } key)
            {
                continue;
            }

            UnitStream s = b.Instrument.Stream!.Value;
            MaterialStream m = s.Phase switch
            {
                StreamPhase.Feed => model.Unit.Nominal.Feed,
                StreamPhase.Solvent => model.Unit.Nominal.Solvent,
                StreamPhase.Raffinate => truth.Stages[s.Stage - 1].Raffinate,
                _ => s.Stage == 0 ? truth.Extract : truth.Stages[s.Stage - 1].Extract,
            };
            double value = key.Quantity == MeasuredQuantity.Flow ? m.Flow : m.Composition[b.Instrument.Component!.Value];
            int n = b.Instrument.IsAnalyzer ? 5 : 1800;
            list.Add(new WindowMeasurement(b.Instrument.Tag, key, value, b.Instrument.SigmaBase / Math.Sqrt(n), n));
        }

        return list;
    }
}
