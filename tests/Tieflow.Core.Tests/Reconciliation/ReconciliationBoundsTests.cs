using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class ReconciliationBoundsTests
{
    // Two inlets and one outlet of a mixer, binary a/b. Invented figures (the reproducer of a fuzz campaign).
    private static ProcessNetwork Mixer() => new(
        ["mixer"],
        [new NetworkStream("S1", null, "mixer"), new NetworkStream("S2", null, "mixer"), new NetworkStream("S3", "mixer", null)],
        ["a", "b"]);

    [Fact]
    public void Reconcile_MixedFractionOutsideItsInlets_HoldsAnInletFlowAtZero()
    {
        // 0.312 is not between 0.300 and 0.310: without bounds S1 = -20 and S2 = 120. Within them S1 = 0, so S2 = S3 and
        // their fractions meet at the mean 0.311 (equal sigmas), one degree of freedom from the active bound.
        ReconciliationResult result = ReconciliationProblem.Create(
            Mixer(),
            [
                Measurement.Fraction("S1", "a", 0.300, 0.002),
                Measurement.Fraction("S2", "a", 0.310, 0.002),
                Measurement.Fraction("S3", "a", 0.312, 0.002),
                Measurement.Flow("S3", 100, 1),
            ]).Reconcile();

        Assert.All(result.Estimates.Where(e => e.HasValue), e => Assert.True(e.Value >= 0, $"{e.Key}: {e.Value}"));
        Assert.Equal([QuantityKey.FlowOf("S1")], result.ActiveBounds);
        QuantityEstimate s1 = result.Flow("S1");
        Assert.True(s1.AtBound);
        Assert.Equal(0, s1.Value);
        Assert.True(Math.Abs(result.Flow("S2").Value - 100) < 1e-9, $"{result.Flow("S2").Value}");
        Assert.True(Math.Abs(result.Fraction("S2", "a").Value - 0.311) < 1e-9);
        Assert.True(Math.Abs(result.Fraction("S3", "a").Value - 0.311) < 1e-9);
        Assert.Equal(1, result.GlobalTest.DegreesOfFreedom);
        Assert.True(Math.Abs(result.GlobalTest.Statistic - 0.5) < 1e-9, $"{result.GlobalTest.Statistic}");
        Assert.True(TestNetworks.WorstRelativeResidual(result) < 1e-9);
    }

    [Fact]
    public void Reconcile_FractionsOfOneStreamAboveOne_KeepTheUnmeasuredFractionAtZero()
    {
        // a + b read 1.5 with c unmeasured: without bounds c = -0.5. Within them c = 0 and a + b = 1, each adjusted by
        // -0.25 (equal sigmas).
        var network = new ProcessNetwork(["pipe"], [new NetworkStream("in", null, "pipe"), new NetworkStream("out", "pipe", null)], ["a", "b", "c"]);
        ReconciliationResult result = ReconciliationProblem.Create(
            network,
            [
                Measurement.Fraction("in", "a", 0.9, 0.01),
                Measurement.Fraction("in", "b", 0.6, 0.01),
                Measurement.Flow("in", 100, 1),
            ]).Reconcile();

        Assert.Equal([QuantityKey.FractionOf("in", "c")], result.ActiveBounds);
        Assert.Equal(0, result.Fraction("in", "c").Value);
        Assert.True(Math.Abs(result.Fraction("in", "a").Value - 0.65) < 1e-9, $"{result.Fraction("in", "a").Value}");
        Assert.True(Math.Abs(result.Fraction("in", "b").Value - 0.35) < 1e-9);
        Assert.True(Math.Abs(result.Fraction("out", "a").Value - 0.65) < 1e-9);
        Assert.All(result.Estimates.Where(e => e.HasValue), e => Assert.InRange(e.Value, 0, e.Key.Quantity == MeasuredQuantity.Flow ? double.MaxValue : 1));
    }

    [Fact]
    public void Reconcile_AllFlowReadingsNegative_ReconcilesToZeroFlows()
    {
        double[] readings = [.. TestNetworks.HeatExchangerReadings.Select(v => -v)];
        ReconciliationResult result = ReconciliationProblem
            .Create(TestNetworks.HeatExchangerWithBypass(), TestNetworks.HeatExchangerMeasurements(readings))
            .Reconcile();

        Assert.All(result.Estimates, e => Assert.True(e.Value >= 0 && e.Value < 1e-9, $"{e.Key}: {e.Value}"));
        Assert.NotEmpty(result.ActiveBounds);
        Assert.False(result.GlobalTest.Passed);
    }

    [Fact]
    public void Reconcile_ActiveBound_IsOptimalAgainstSmallMovesInside()
    {
        // The bounded optimum of the mixer: holding S1 at a small positive flow instead must not lower the objective.
        ProcessNetwork network = Mixer();
        Measurement[] measurements =
        [
            Measurement.Fraction("S1", "a", 0.300, 0.002),
            Measurement.Fraction("S2", "a", 0.310, 0.002),
            Measurement.Fraction("S3", "a", 0.312, 0.002),
            Measurement.Flow("S3", 100, 1),
        ];
        double bounded = ReconciliationProblem.Create(network, measurements).Reconcile().GlobalTest.Statistic;
        foreach (double s1 in new[] { 0.5, 2.0, 5.0 })
        {
            // Measuring S1 almost exactly pins it there.
            ReconciliationResult pinned = ReconciliationProblem.Create(network, [.. measurements, Measurement.Flow("S1", s1, 1e-7)]).Reconcile();
            Assert.True(pinned.GlobalTest.Statistic > bounded, $"S1 = {s1}: {pinned.GlobalTest.Statistic} vs {bounded}");
        }
    }

    [Fact]
    public void Reconcile_ExactValuesThatContradict_IsInfeasibleWithAMessage()
    {
        // S1 = S6 by the balances, both given as exactly known with different values.
        ReconciliationProblem problem = ReconciliationProblem.Create(
            TestNetworks.HeatExchangerWithBypass(),
            [Measurement.Flow("S1", 100, 1e-12), Measurement.Flow("S6", 98, 1e-12), Measurement.Flow("S2", 60, 1)]);

        Assert.False(problem.TryReconcile([100, 98, 60], out ReconciliationResult result));
        Assert.Equal(ReconciliationStatus.Infeasible, result.Status);
        Assert.Contains("cannot be reconciled within the bounds", result.Message, StringComparison.Ordinal);
        Assert.Contains("S1 flow", result.Message, StringComparison.Ordinal);
        ReconciliationException e = Assert.Throws<ReconciliationException>(() => problem.Reconcile());
        Assert.Equal(result.Message, e.Message);
    }

    [Fact]
    public void Reconcile_SigmaWithoutInformation_IsReconciledAsUnmeasured()
    {
        // The heat exchanger with bypass (Narasimhan and Jordache, 2000, as in the reference test) with S2 read by a
        // meter of sigma 1e308: in effect unmeasured, so 4 - 1 = 3 degrees of freedom remain and S2 follows from S4.
        double[] sigmas = [1, 1e308, 1, 1, 1, 1];
        ReconciliationResult result = ReconciliationProblem.Create(
            TestNetworks.HeatExchangerWithBypass(),
            [.. TestNetworks.HeatExchangerReadings.Select((v, i) => Measurement.Flow($"S{i + 1}", v, sigmas[i]))]).Reconcile();

        Assert.Equal(3, result.GlobalTest.DegreesOfFreedom);
        Assert.Equal(ReconciliationStatus.Reconciled, result.Status);
        QuantityEstimate s2 = result.Flow("S2");
        Assert.Equal(QuantityStatus.Observable, s2.Status);
        Assert.Equal(TestNetworks.HeatExchangerReadings[1], s2.Measured);
        Assert.True(Math.Abs(s2.Value - result.Flow("S4").Value) < 1e-9);
        Assert.Equal(5, result.MeasurementTests.Count);
        Assert.True(TestNetworks.WorstRelativeResidual(result) < 1e-12);
        Assert.All(result.Estimates, e => Assert.True(double.IsFinite(e.Value) && double.IsFinite(e.Sigma), $"{e.Key}"));

        // The same as leaving the reading out.
        ReconciliationResult without = ReconciliationProblem.Create(
            TestNetworks.HeatExchangerWithBypass(),
            [.. TestNetworks.HeatExchangerReadings.Select((v, i) => Measurement.Flow($"S{i + 1}", v, 1)).Where(m => m.Key.Stream != "S2")]).Reconcile();
        Assert.True(Math.Abs(without.GlobalTest.Statistic - result.GlobalTest.Statistic) < 1e-12);
    }

    [Fact]
    public void Reconcile_ExactSigma_HoldsTheReadingAndClassifiesTheRest()
    {
        // S1 exactly known (sigma 1e-300): it keeps its reading with sigma 0, S6 = S1 is then no longer adjustable, and
        // the remaining four measurements balance on S2 + S3 = S1 and S4 + S5 = S1 with S2 = S4, S3 = S5: 3 dof.
        double[] sigmas = [1e-300, 1, 1, 1, 1, 1];
        ReconciliationResult result = ReconciliationProblem.Create(
            TestNetworks.HeatExchangerWithBypass(),
            [.. TestNetworks.HeatExchangerReadings.Select((v, i) => Measurement.Flow($"S{i + 1}", v, sigmas[i]))]).Reconcile();

        QuantityEstimate s1 = result.Flow("S1");
        Assert.Equal(TestNetworks.HeatExchangerReadings[0], s1.Value);
        Assert.Equal(0, s1.Sigma);
        Assert.Equal(QuantityStatus.NonRedundant, s1.Status);
        Assert.Equal(4, result.GlobalTest.DegreesOfFreedom);
        Assert.True(Math.Abs(result.Flow("S6").Value - TestNetworks.HeatExchangerReadings[0]) < 1e-9);
        Assert.True(Math.Abs(result.Flow("S2").Value + result.Flow("S3").Value - TestNetworks.HeatExchangerReadings[0]) < 1e-9);
        Assert.All(result.Estimates, e => Assert.True(double.IsFinite(e.Value) && double.IsFinite(e.Sigma), $"{e.Key}"));
    }
    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Reconcile_TrainWithHalfItsFractionsUnmeasured_SettlesOnItsActiveBounds(bool denseReference)
    {
        // A 24-stage train (invented state of TestNetworks.TrainState, seeded noise) measured as usual, but with about
        // half of the fractions of that set not measured and some 15 % of the rest measured. The passes used to cycle:
        // from the solution inside the bounds with R22 c and E20 b held at zero (chi-square 13.3), releasing E20 b led to
        // R19 at -178, holding R19 at zero then needed E20 b held again (chi-square 19.8, then 39340 with R5 c held
        // too), and the releases led back to the start, until the limit of 410 passes (698 passes and about two
        // minutes for a 42-stage train).
        var random = new Random(8);
        const int Stages = 24;
        ProcessNetwork train = TestNetworks.Train(Stages);
        double[] truth = TestNetworks.TrainState(Stages, 80 + (60 * random.NextDouble()), 120 + (80 * random.NextDouble()));
        var measurements = new List<Measurement>();
        for (int v = 0; v < train.QuantityCount; v++)
        {
            QuantityKey key = train.KeyAt(v);
            bool usual = TestNetworks.IsMeasuredInTrain(key, Stages) && !(key.Quantity == MeasuredQuantity.Fraction && random.NextDouble() < 0.5);
            if (!usual && random.NextDouble() >= 0.15)
            {
                continue;
            }

            double sigma = TestNetworks.TrainSigma(key, truth[v]);
            double value = truth[v] + (sigma * TestNetworks.Gaussian(random));
            measurements.Add(new Measurement(key, key.Quantity == MeasuredQuantity.Fraction ? Math.Clamp(value, 0, 1) : value, sigma));
        }

        ReconciliationProblem problem = ReconciliationProblem.Create(train, measurements, new ReconciliationOptions { DenseReference = denseReference });
        Assert.True(problem.TryReconcile([.. measurements.Select(m => m.Value)], out ReconciliationResult result), result.Message);
        foreach (QuantityEstimate e in result.Estimates.Where(e => e.HasValue))
        {
            Assert.True(e.Value >= -1e-9 && (e.Key.Quantity == MeasuredQuantity.Flow || e.Value <= 1 + 1e-9), $"{e.Key} = {e.Value}");
        }

        Assert.True(TestNetworks.WorstRelativeResidualOfObservable(result) <= 1e-8);

        // Readings within their sigmas of a consistent state: the solution fits them (the far solution had a
        // chi-square in the tens of thousands).
        Assert.True(result.GlobalTest.Statistic < 3 * Math.Max(1, result.GlobalTest.DegreesOfFreedom), $"chi-square {result.GlobalTest.Statistic} with {result.GlobalTest.DegreesOfFreedom} degrees of freedom");
    }
}
