using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class SerialEliminationReconcilerTests
{
    [Fact]
    public void Reconcile_ManyWindowsOnOneReconciler_EqualsANewProblemPerWindow()
    {
        // The same quantities window after window, in a shuffled order, some with a gross error so that the serial
        // elimination runs: the kept problems give the answers of problems prepared afresh (DataReconciler's way
        // before problems were kept, each from an empty working set of bounds) to 1e-9 relative (the kept layouts take banded steps, the fresh ones dense
        // steps: roundoff and the convergence tolerance of the bilinear iteration, not method).
        ProcessNetwork network = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        var random = new Random(21);
        var kept = new SerialEliminationReconciler(network);
        for (int window = 0; window < 40; window++)
        {
            List<Measurement> measurements = TestNetworks.TrainMeasurements(network, truth, random);
            if (window % 3 == 0)
            {
                int biased = random.Next(measurements.Count);
                Measurement m = measurements[biased];
                double value = m.Key.Quantity == MeasuredQuantity.Flow ? m.Value + (12 * m.Sigma) : Math.Clamp(m.Value + (12 * m.Sigma), 0, 1);
                measurements[biased] = m with { Value = value };
            }

            // A fresh solvent's solute stated as about nil, as the analysis states such a fraction.
            int known = measurements.FindIndex(m => m.Key == QuantityKey.FractionOf("solvent", "a"));
            measurements[known] = measurements[known] with { Value = Math.Max(0, 2e-4 * TestNetworks.Gaussian(random)), Sigma = 2e-4 };
            Measurement[] shuffled = [.. measurements.OrderBy(_ => random.Next())];
            ReconciliationReport expected = FreshEachTime(network, shuffled);
            ReconciliationReport actual = kept.Reconcile(shuffled);
            Assert.Equal(expected.Suspects, actual.Suspects);
            AssertSame(expected.Initial, actual.Initial);
            AssertSame(expected.Final, actual.Final);
            Assert.Equal(expected.Final.ActiveBounds, actual.Final.ActiveBounds);
        }

        Assert.InRange(kept.PreparedCount, 1, 32);
    }

    [Fact]
    public void Reconcile_AccumulationChangingEveryWindow_EqualsANewProblemWithIt()
    {
        // A monitor's hold-ups settle at another rate in every window: the kept problem takes each window's accumulation
        // and gives the answer of a problem prepared afresh with it; a window without accumulation is steady again.
        ProcessNetwork network = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        var random = new Random(33);
        var kept = new SerialEliminationReconciler(network);
        for (int window = 0; window < 12; window++)
        {
            List<Measurement> measurements = TestNetworks.TrainMeasurements(network, truth, random);
            List<NodeAccumulation>? accumulation = window % 4 == 3
                ? null
                : [.. network.Nodes.Select(node => new NodeAccumulation(node, "a", 0.5 * TestNetworks.Gaussian(random)))];
            ReconciliationReport expected = FreshEachTime(network, measurements, accumulation);
            ReconciliationReport actual = kept.Reconcile(measurements, accumulation);
            Assert.Equal(expected.Suspects, actual.Suspects);
            AssertSame(expected.Initial, actual.Initial);
            AssertSame(expected.Final, actual.Final);
        }

        // The accumulation reaches the kept problem: the same readings with and without it reconcile differently.
        List<Measurement> same = TestNetworks.TrainMeasurements(network, truth, new Random(5));
        double steady = kept.Reconcile(same).Final.GlobalTest.Statistic;
        double filling = kept.Reconcile(same, [.. network.Nodes.Select(node => new NodeAccumulation(node, "a", 2.0))]).Final.GlobalTest.Statistic;
        Assert.NotEqual(steady, filling, 1e-6);
    }

    [Fact]
    public void Reconcile_UnknownStream_NamesTheMeasurementAsANewProblemDoes()
    {
        var kept = new SerialEliminationReconciler(TestNetworks.SixStageTrain());
        var e = Assert.Throws<ArgumentException>(() => kept.Reconcile([Measurement.Flow("nowhere", 1, 0.1)]));
        Assert.Contains("Measurement 0", e.Message, StringComparison.Ordinal);
        Assert.Contains("unknown stream", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Reconcile_KeptProblemWithABadSigma_Throws()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        List<Measurement> measurements = TestNetworks.TrainMeasurements(network, TestNetworks.SixStageTrainState(), new Random(3));
        var kept = new SerialEliminationReconciler(network);
        kept.Reconcile(measurements);
        measurements[0] = measurements[0] with { Sigma = 0 };
        Assert.Throws<ArgumentException>(() => kept.Reconcile(measurements));
    }

    // Serial elimination with a newly prepared problem for every reconciliation.
    private static ReconciliationReport FreshEachTime(ProcessNetwork network, IReadOnlyList<Measurement> measurements, IReadOnlyList<NodeAccumulation>? accumulation = null)
    {
        ReconciliationResult initial = ReconciliationProblem.Create(network, measurements, null, accumulation).Reconcile();
        var suspects = new List<QuantityKey>();
        var remaining = new List<Measurement>(measurements);
        ReconciliationResult current = initial;
        while (!current.GlobalTest.Passed && current.MeasurementTests.Count > 0)
        {
            MeasurementTest worst = current.MeasurementTests.MaxBy(t => Math.Abs(t.Normalized))!;
            suspects.Add(worst.Key);
            remaining.RemoveAll(m => m.Key == worst.Key);
            current = ReconciliationProblem.Create(network, remaining, null, accumulation).Reconcile();
        }

        return new ReconciliationReport(initial, current, suspects);
    }

    private static void AssertSame(ReconciliationResult expected, ReconciliationResult actual)
    {
        Assert.Equal(expected.Status, actual.Status);
        Assert.Equal(expected.GlobalTest.DegreesOfFreedom, actual.GlobalTest.DegreesOfFreedom);
        Assert.Equal(expected.GlobalTest.Passed, actual.GlobalTest.Passed);
        Assert.Equal(expected.GlobalTest.Statistic, actual.GlobalTest.Statistic, 1e-9 * Math.Max(1, expected.GlobalTest.Statistic));
        for (int v = 0; v < expected.Estimates.Count; v++)
        {
            QuantityEstimate e = expected.Estimates[v], a = actual.Estimates[v];
            Assert.Equal(e.Status, a.Status);
            double scale = e.Key.Quantity == MeasuredQuantity.Flow ? 100 : 1;
            if (e.HasValue)
            {
                Assert.Equal(e.Value, a.Value, 1e-9 * scale);
                Assert.Equal(e.Sigma, a.Sigma, 1e-9 * scale);
            }
        }

        Assert.Equal(expected.MeasurementTests.Count, actual.MeasurementTests.Count);
        foreach (MeasurementTest t in expected.MeasurementTests)
        {
            MeasurementTest? other = actual.TestOf(t.Key);
            Assert.NotNull(other);
            Assert.Equal(t.Normalized, other.Value.Normalized, 1e-7);
        }
    }
}
