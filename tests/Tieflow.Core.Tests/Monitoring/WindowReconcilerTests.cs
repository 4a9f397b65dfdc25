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
        (UnitModel model, List<WindowMeasurement> readings) = FeedMeterReadingHigh();

        WindowReconciliation r = new WindowReconciler(model).Reconcile(readings, 298.15);

        Assert.False(r.Report.Initial.GlobalTest.Passed);
        Assert.Equal("FI-301", Assert.Single(r.SuspectTags));
    }

    [Fact]
    public void ASettlingWindow_KeepsEveryInstrumentAndScalesItsSigmasByTheBirgeRatio()
    {
        // The same 12-sigma misfit in a window the steady-state gate did not pass: nothing is eliminated, and the sigmas
        // of every estimate grow by sqrt(chi-square / dof) of the one reconciliation (Birge 1932, Phys. Rev. 40, 207).
        (UnitModel model, List<WindowMeasurement> readings) = FeedMeterReadingHigh();
        var reconciler = new WindowReconciler(model);

        WindowReconciliation settling = reconciler.Reconcile(readings, 298.15, steady: false);
        WindowReconciliation steady = reconciler.Reconcile(readings, 298.15);

        GlobalTest test = settling.Report.Initial.GlobalTest;
        output.WriteLine($"settling window: chi-square {test.Statistic:F1} on {test.DegreesOfFreedom} dof, sigma scale {settling.SigmaScale:F3}");
        Assert.False(test.Passed);
        Assert.Empty(settling.SuspectTags);
        Assert.Empty(settling.Report.Suspects);
        Assert.Equal(test, settling.Report.Final.GlobalTest);
        Assert.Equal(Math.Sqrt(test.Statistic / test.DegreesOfFreedom), settling.SigmaScale, 1e-12);
        for (int v = 0; v < settling.Report.Final.Estimates.Count; v++)
        {
            QuantityEstimate raw = settling.Report.Initial.Estimates[v], scaled = settling.Report.Final.Estimates[v];
            Assert.Equal(raw.Value, scaled.Value);
            Assert.Equal(raw.Sigma * settling.SigmaScale, scaled.Sigma, 1e-12 * Math.Max(1, raw.Sigma));
        }

        // The kept reconciler still names the meter in a steady window, with sigmas unscaled.
        Assert.Equal("FI-301", Assert.Single(steady.SuspectTags));
        Assert.Equal(1, steady.SigmaScale);
    }

    [Fact]
    public void ASettlingWindowWhoseAdjustmentsFitTheirSigmas_KeepsItsSigmas()
    {
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);

        WindowReconciliation r = new WindowReconciler(model).Reconcile(Readings(model, truth), 298.15, steady: false);

        Assert.True(r.Report.Final.GlobalTest.Statistic <= r.Report.Final.GlobalTest.DegreesOfFreedom);
        Assert.Equal(1, r.SigmaScale);
        Assert.Equal(r.Report.Initial.Estimates, r.Report.Final.Estimates);
    }

    [Fact]
    public void AnExcludedMeter_IsLeftOutOfTheBalancesAndTestedAgainstTheEstimateWithoutIt()
    {
        // The biased feed meter, left out: the balances are those of the other instruments alone, and the meter's reading
        // is tested against their estimate of the feed flow (the test of a deleted measurement, sigma of the difference
        // sqrt(sigma_m^2 + sigma_estimate^2)), which its 12-sigma bias fails.
        (UnitModel model, List<WindowMeasurement> readings) = FeedMeterReadingHigh();
        WindowMeasurement meter = readings.Single(m => m.Tag == "FI-301");

        WindowReconciliation left = new WindowReconciler(model).Reconcile(readings, 298.15, excludedTags: new HashSet<string> { "FI-301" });
        WindowReconciliation without = new WindowReconciler(model).Reconcile([.. readings.Where(m => m.Tag != "FI-301")], 298.15);

        Assert.True(left.Report.Initial.GlobalTest.Passed);
        Assert.Empty(left.SuspectTags);
        Assert.Empty(left.KeptTags);
        for (int v = 0; v < without.Report.Final.Estimates.Count; v++)
        {
            Assert.Equal(without.Report.Final.Estimates[v], left.Report.Final.Estimates[v]);
        }

        ExcludedMeasurementTest test = Assert.Single(left.ExcludedTests);
        QuantityEstimate feed = without.Report.Final.Flow("feed");
        output.WriteLine($"FI-301 {test.Measured:F2} against {test.Estimate:F2} +- {feed.Sigma:F2}: z = {test.Normalized:F2}, critical {test.Critical:F3}");
        Assert.Equal("FI-301", test.Tag);
        Assert.Equal(feed.Value, test.Estimate);
        Assert.Equal(Math.Sqrt((meter.Sigma * meter.Sigma) + (feed.Sigma * feed.Sigma)), test.Sigma, 1e-12);
        Assert.Equal(GrossErrorTests.SidakCritical(1, 0.05), test.Critical);
        Assert.True(test.Disagrees);
        Assert.InRange(test.Normalized, 3, 12);
    }

    [Fact]
    public void AnExcludedMeterThatReadsTrue_PassesItsTest()
    {
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);

        WindowReconciliation r = new WindowReconciler(model).Reconcile(Readings(model, truth), 298.15, excludedTags: new HashSet<string> { "FI-301", "FI-305" });

        Assert.Equal(2, r.ExcludedTests.Count);
        Assert.All(r.ExcludedTests, t => Assert.False(t.Disagrees, $"{t.Tag}: z = {t.Normalized}"));
        Assert.All(r.ExcludedTests, t => Assert.Equal(GrossErrorTests.SidakCritical(2, 0.05), t.Critical));
        Assert.All(r.ExcludedTests, t => Assert.InRange(Math.Abs(t.Normalized), 0, 0.01));
    }

    [Fact]
    public void ExcludedMetersWithoutWhichTheFlowsAreUnobservable_AreKeptIn()
    {
        // Compositions alone fix no flow: with every flow meter left out, no flow could be estimated, so they all go back
        // in and the window is reconciled as if nothing had been excluded.
        (UnitModel model, List<WindowMeasurement> readings) = FeedMeterReadingHigh();
        HashSet<string> meters = [.. readings.Where(m => m.Key.Quantity == MeasuredQuantity.Flow).Select(m => m.Tag)];

        WindowReconciliation r = new WindowReconciler(model).Reconcile(readings, 298.15, excludedTags: meters);
        WindowReconciliation plain = new WindowReconciler(model).Reconcile(readings, 298.15);

        Assert.Equal(meters.Order(StringComparer.Ordinal), r.KeptTags.Order(StringComparer.Ordinal));
        Assert.Empty(r.ExcludedTests);
        Assert.Equal(plain.SuspectTags, r.SuspectTags);
        Assert.Equal(plain.Report.Final.Estimates, r.Report.Final.Estimates);
    }

    [Fact]
    public void TheEnvelopeIteration_StopsNearItsFixedPoint()
    {
        // Noisy windows reconciled with the default tolerance (1e-7, with the predicted-move stop) and with 1e-13, which
        // runs the iteration to roundoff: the solute estimates agree to the tolerance.
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);
        var usual = new WindowReconciler(model);
        var tight = new WindowReconciler(model, new WindowReconcilerSettings { EnvelopeTolerance = 1e-13, MaxEnvelopeIterations = 30 });
        var random = new Random(21);
        int usualIterations = 0, tightIterations = 0;
        for (int window = 0; window < 20; window++)
        {
            IReadOnlyList<WindowMeasurement> readings = Noisy(Readings(model, truth), random);
            WindowReconciliation a = usual.Reconcile(readings, 298.15), b = tight.Reconcile(readings, 298.15);
            usualIterations += a.EnvelopeIterations;
            tightIterations += b.EnvelopeIterations;
            Assert.Equal(b.SuspectTags, a.SuspectTags);
            foreach (string id in b.SaturatedStreams)
            {
                Assert.Equal(b.Report.Final.Fraction(id, model.ComponentIds[0]).Value, a.Report.Final.Fraction(id, model.ComponentIds[0]).Value, 1e-7);
            }
        }

        output.WriteLine($"envelope iterations over 20 windows: {usualIterations} at the default tolerance, {tightIterations} at 1e-13");
        Assert.True(usualIterations < tightIterations);
    }

    // The four-stage train's exact readings, but the feed meter FI-301 reading 12 of its sigmas high.
    private static (UnitModel Model, List<WindowMeasurement> Readings) FeedMeterReadingHigh()
    {
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);
        List<WindowMeasurement> readings = [.. Readings(model, truth)];
        int i = readings.FindIndex(m => m.Tag == "FI-301");
        readings[i] = readings[i] with { Value = readings[i].Value + (12 * readings[i].Sigma) };
        return (model, readings);
    }

    [Fact]
    public void OneReconcilerOverManyWindows_EqualsANewReconcilerPerWindow()
    {
        // A kept reconciler keeps its prepared problems and starts each from the bounds its last solution held (the
        // fresh solvent's and feed's nil fractions reach zero in about half the windows); a new reconciler per window
        // is the way before: the same estimates and efficiencies to 1e-8.
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Efficiencies);
        var model = new UnitModel(unit);
        var kept = new WindowReconciler(model);
        var random = new Random(8);
        int atBound = 0;
        for (int window = 0; window < 30; window++)
        {
            WindowMeasurement[] readings = [.. Noisy(Readings(model, truth), random).OrderBy(_ => random.Next())];
            WindowReconciliation expected = new WindowReconciler(model).Reconcile(readings, 298.15);
            WindowReconciliation actual = kept.Reconcile(readings, 298.15);
            atBound += expected.Report.Final.ActiveBounds.Count > 0 ? 1 : 0;
            Assert.Equal(expected.Report.Final.ActiveBounds.Count, actual.Report.Final.ActiveBounds.Count);
            Assert.Equal(expected.SuspectTags, actual.SuspectTags);
            for (int v = 0; v < expected.Report.Final.Estimates.Count; v++)
            {
                QuantityEstimate e = expected.Report.Final.Estimates[v], a = actual.Report.Final.Estimates[v];
                Assert.Equal(e.HasValue, a.HasValue);
                if (e.HasValue)
                {
                    double scale = e.Key.Quantity == MeasuredQuantity.Flow ? 1000 : 1;
                    Assert.Equal(e.Value, a.Value, 1e-8 * scale);
                    Assert.Equal(e.Sigma, a.Sigma, 1e-8 * scale);
                }
            }

            for (int k = 0; k < expected.Efficiencies.Count; k++)
            {
                Assert.Equal(expected.Efficiencies[k].Status, actual.Efficiencies[k].Status);
                if (expected.Efficiencies[k].Status == EfficiencyStatus.Determined)
                {
                    Assert.Equal(expected.Efficiencies[k].Value, actual.Efficiencies[k].Value, 1e-8);
                    Assert.Equal(expected.Efficiencies[k].Sigma, actual.Efficiencies[k].Sigma, 1e-8);
                }
            }
        }

        output.WriteLine($"{atBound} of 30 windows with a bound active");
        Assert.InRange(atBound, 3, 30);
    }

    // Each reading moved by one of its sigmas times a standard normal draw (fractions kept within 0 and 1).
    private static List<WindowMeasurement> Noisy(IReadOnlyList<WindowMeasurement> readings, Random random) =>
        [.. readings.Select(m => m with
        {
            Value = m.Key.Quantity == MeasuredQuantity.Flow ? m.Value + (m.Sigma * Gaussian(random)) : Math.Clamp(m.Value + (m.Sigma * Gaussian(random)), 0, 1),
        })];

    private static double Gaussian(Random random) =>
        Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());

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
