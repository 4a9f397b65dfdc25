using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class ReconciliationProblemTests
{
    // Expected values: Narasimhan and Jordache, "Data Reconciliation and Gross Error Detection" (Gulf, 2000),
    // heat exchanger with bypass, as reproduced with computed reconciled values and normalised adjustments in
    // docs/reference-data.md §4.
    [Fact]
    public void Reconcile_HeatExchangerWithBypass_MatchesReference()
    {
        ProcessNetwork network = TestNetworks.HeatExchangerWithBypass();
        ReconciliationResult result = ReconciliationProblem
            .Create(network, TestNetworks.HeatExchangerMeasurements(TestNetworks.HeatExchangerReadings))
            .Reconcile();

        double[] reconciled = [100.22, 64.50, 35.72, 64.50, 35.72, 100.22];
        double[] normalized = [2.070, 0.061, 1.310, 0.367, 0.882, 1.641];
        for (int i = 0; i < 6; i++)
        {
            QuantityEstimate e = result.Flow($"S{i + 1}");
            Assert.Equal(QuantityStatus.Redundant, e.Status);
            Assert.True(Math.Abs(e.Value - reconciled[i]) < 0.01, $"S{i + 1}: {e.Value}");
            Assert.True(Math.Abs(Math.Abs(result.MeasurementTests[i].Normalized) - normalized[i]) < 1e-3, $"S{i + 1}: {result.MeasurementTests[i].Normalized}");
        }

        Assert.Equal(ReconciliationStatus.Reconciled, result.Status);
        Assert.Equal(4, result.GlobalTest.DegreesOfFreedom);
        Assert.True(Math.Abs(result.GlobalTest.Statistic - 6.4075) < 1e-3, $"{result.GlobalTest.Statistic}");
        Assert.True(Math.Abs(result.GlobalTest.Critical - 9.488) < 1e-3);
        Assert.True(result.GlobalTest.Passed);

        // Largest normalised adjustment 2.07 is above 1.96 but below the Sidak-corrected 2.631 for six tests (same source).
        Assert.True(Math.Abs(result.MeasurementTests[0].Critical - 2.631) < 1e-3);
        Assert.DoesNotContain(result.MeasurementTests, t => t.Suspect);
        Assert.True(result.BalanceResidual < 1e-12);
    }

    // Constructed variant of the same reference (docs/reference-data.md §4): +5 on stream 2.
    [Fact]
    public void Reconcile_HeatExchangerVariant_MatchesReferenceTests()
    {
        double[] readings = [.. TestNetworks.HeatExchangerReadings];
        readings[1] += 5;
        ReconciliationResult result = ReconciliationProblem
            .Create(TestNetworks.HeatExchangerWithBypass(), TestNetworks.HeatExchangerMeasurements(readings))
            .Reconcile();

        Assert.True(Math.Abs(result.GlobalTest.Statistic - 22.574) < 1e-3, $"{result.GlobalTest.Statistic}");
        Assert.False(result.GlobalTest.Passed);
        double[] normalized = [1.049, 4.021, 0.290, 2.409, 1.902, 2.662];
        for (int i = 0; i < 6; i++)
        {
            Assert.True(Math.Abs(Math.Abs(result.MeasurementTests[i].Normalized) - normalized[i]) < 1e-3, $"S{i + 1}: {result.MeasurementTests[i].Normalized}");
        }
    }

    [Fact]
    public void Reconcile_HeatExchangerStandardDeviations_MatchLinearTheory()
    {
        // With unit sigmas, S2 and S4 are reconciled to one value and so are S3 and S5, S1 and S6 (the balances);
        // Cov(x) = S - S A'(A S A')^-1 A S computed independently with MathNet (a general-purpose library).
        ProcessNetwork network = TestNetworks.HeatExchangerWithBypass();
        ReconciliationResult result = ReconciliationProblem
            .Create(network, TestNetworks.HeatExchangerMeasurements(TestNetworks.HeatExchangerReadings))
            .Reconcile();
        var a = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseOfArray(new double[,]
        {
            { 1, -1, -1, 0, 0, 0 },
            { 0, 1, 0, -1, 0, 0 },
            { 0, 0, 1, 0, -1, 0 },
            { 0, 0, 0, 1, 1, -1 },
        });
        var cov = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseIdentity(6) - (a.Transpose() * (a * a.Transpose()).Inverse() * a);
        for (int i = 0; i < 6; i++)
        {
            Assert.True(Math.Abs(result.Flow($"S{i + 1}").Sigma - Math.Sqrt(cov[i, i])) < 1e-12);
        }
    }

    [Fact]
    public void Reconcile_UnmeasuredParallelPaths_AreUnobservable()
    {
        // Only S1 and S6 measured: the split between exchanger and bypass is not determined.
        ProcessNetwork network = TestNetworks.HeatExchangerWithBypass();
        ReconciliationResult result = ReconciliationProblem
            .Create(network, [Measurement.Flow("S1", 101.91, 1), Measurement.Flow("S6", 98.88, 1)])
            .Reconcile();

        Assert.Equal(1, result.GlobalTest.DegreesOfFreedom);
        foreach (string s in new[] { "S2", "S3", "S4", "S5" })
        {
            Assert.Equal(QuantityStatus.Unobservable, result.Flow(s).Status);
            Assert.True(double.IsNaN(result.Flow(s).Value));
        }

        Assert.True(Math.Abs(result.Flow("S1").Value - 100.395) < 1e-9);
        Assert.True(Math.Abs(result.Flow("S6").Value - 100.395) < 1e-9);
        Assert.True(Math.Abs(result.Flow("S1").Sigma - Math.Sqrt(0.5)) < 1e-12);
    }

    [Fact]
    public void Reconcile_NothingRedundant_ReportsZeroDegreesOfFreedom()
    {
        ProcessNetwork network = TestNetworks.HeatExchangerWithBypass();
        ReconciliationResult result = ReconciliationProblem
            .Create(network, [Measurement.Flow("S1", 100, 2), Measurement.Flow("S2", 60, 1)])
            .Reconcile();

        Assert.Equal(ReconciliationStatus.NothingRedundant, result.Status);
        Assert.Equal(0, result.GlobalTest.DegreesOfFreedom);
        Assert.True(result.GlobalTest.Passed);
        Assert.Empty(result.MeasurementTests);
        Assert.Equal(QuantityStatus.NonRedundant, result.Flow("S1").Status);
        Assert.True(Math.Abs(result.Flow("S1").Value - 100) < 1e-12);

        // S3 = S1 - S2 and S5 = S3: observable with sigma sqrt(2^2 + 1^2).
        QuantityEstimate s5 = result.Flow("S5");
        Assert.Equal(QuantityStatus.Observable, s5.Status);
        Assert.True(Math.Abs(s5.Value - 40) < 1e-12);
        Assert.True(Math.Abs(s5.Sigma - Math.Sqrt(5)) < 1e-12);
    }

    [Fact]
    public void Reconcile_MixedRedundancy_ClassifiesEachMeasurement()
    {
        // S1, S2, S3 measured: S1 = S2 + S3 makes all three redundant; S4..S6 follow and are observable.
        ReconciliationResult result = ReconciliationProblem.Create(
            TestNetworks.HeatExchangerWithBypass(),
            [Measurement.Flow("S1", 101, 1), Measurement.Flow("S2", 64, 1), Measurement.Flow("S3", 34, 1)]).Reconcile();

        Assert.Equal(1, result.GlobalTest.DegreesOfFreedom);
        Assert.All(new[] { "S1", "S2", "S3" }, s => Assert.Equal(QuantityStatus.Redundant, result.Flow(s).Status));
        Assert.All(new[] { "S4", "S5", "S6" }, s => Assert.Equal(QuantityStatus.Observable, result.Flow(s).Status));
        Assert.True(Math.Abs(result.Flow("S6").Value - result.Flow("S1").Value) < 1e-10);
        Assert.True(Math.Abs(result.Flow("S1").Value - (101 - 1.0)) < 1e-10);
    }

    [Fact]
    public void Reconcile_ConsistentTernaryTrain_LeavesMeasurementsUnchanged()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        List<Measurement> measurements = TestNetworks.TrainMeasurements(network, truth, new Random(1), noiseScale: 0);
        ReconciliationResult result = ReconciliationProblem.Create(network, measurements).Reconcile();

        Assert.Equal(ReconciliationStatus.Reconciled, result.Status);
        Assert.True(result.GlobalTest.Statistic < 1e-12, $"{result.GlobalTest.Statistic}");
        for (int v = 0; v < network.QuantityCount; v++)
        {
            QuantityEstimate e = result.Estimates[v];
            Assert.NotEqual(QuantityStatus.Unobservable, e.Status);
            Assert.True(Math.Abs(e.Value - truth[v]) <= 1e-9 * Math.Max(1, Math.Abs(truth[v])), $"{e.Key}: {e.Value} vs {truth[v]}");
        }
    }

    [Fact]
    public void Reconcile_NoisyTernaryTrain_ClosesBalancesAndClassifies()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        List<Measurement> measurements = TestNetworks.TrainMeasurements(network, truth, new Random(2));
        ReconciliationResult result = ReconciliationProblem.Create(network, measurements).Reconcile();

        Assert.Equal(56 - 36, result.Estimates.Count(e => e.Status == QuantityStatus.Observable));
        Assert.True(result.GlobalTest.DegreesOfFreedom > 0);
        Assert.True(TestNetworks.WorstRelativeResidual(result) < 1e-9);
        Assert.True(result.Iterations < 10, $"{result.Iterations} iterations");
        Assert.All(result.Estimates, e => Assert.True(e.Sigma > 0 && double.IsFinite(e.Sigma), $"{e.Key}: {e.Sigma}"));
    }

    [Fact]
    public void Reconcile_IterationLimitTooLow_ThrowsWithIterationsAndResidual()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        List<Measurement> measurements = TestNetworks.TrainMeasurements(network, TestNetworks.SixStageTrainState(), new Random(3));
        ReconciliationProblem problem = ReconciliationProblem.Create(network, measurements, new ReconciliationOptions { MaxIterations = 1 });

        ReconciliationException e = Assert.Throws<ReconciliationException>(() => problem.Reconcile());
        Assert.Contains("after 1 iterations", e.Message, StringComparison.Ordinal);
        Assert.Contains("residual", e.Message, StringComparison.Ordinal);
        Assert.False(problem.TryReconcile([.. measurements.Select(m => m.Value)], out ReconciliationResult failed));
        Assert.Equal(ReconciliationStatus.NotConverged, failed.Status);
        Assert.Equal(e.Message, failed.Message);
        Assert.All(failed.Estimates, q => Assert.False(q.HasValue));
    }

    [Fact]
    public void Reconcile_NewReadings_ReusesPreparation()
    {
        ProcessNetwork network = TestNetworks.HeatExchangerWithBypass();
        ReconciliationProblem problem = ReconciliationProblem.Create(network, TestNetworks.HeatExchangerMeasurements([1, 1, 1, 1, 1, 1]));
        ReconciliationResult result = problem.Reconcile(TestNetworks.HeatExchangerReadings);
        Assert.True(Math.Abs(result.GlobalTest.Statistic - 6.4075) < 1e-3);
    }

    [Fact]
    public void Reconcile_NewSigmas_MatchAFreshPreparation()
    {
        ProcessNetwork network = TestNetworks.HeatExchangerWithBypass();
        double[] sigmas = [2, 1, 1, 1.5, 1, 3];
        ReconciliationProblem reused = ReconciliationProblem.Create(network, TestNetworks.HeatExchangerMeasurements(TestNetworks.HeatExchangerReadings));
        reused.Reconcile();
        ReconciliationResult a = reused.Reconcile(TestNetworks.HeatExchangerReadings, sigmas);
        ReconciliationResult b = ReconciliationProblem.Create(
            network, [.. TestNetworks.HeatExchangerReadings.Select((v, i) => Measurement.Flow($"S{i + 1}", v, sigmas[i]))]).Reconcile();

        Assert.True(Math.Abs(a.GlobalTest.Statistic - b.GlobalTest.Statistic) < 1e-12);
        for (int i = 0; i < 6; i++)
        {
            Assert.True(Math.Abs(a.Estimates[i].Value - b.Estimates[i].Value) < 1e-12);
            Assert.True(Math.Abs(a.Estimates[i].Sigma - b.Estimates[i].Sigma) < 1e-12);
        }

        Assert.Throws<ArgumentException>(() => reused.Reconcile(TestNetworks.HeatExchangerReadings, [1, 1, 1, 1, 1, 0]));
    }

    public static TheoryData<string, Measurement> BadMeasurements() => new()
    {
        { "unknown stream", Measurement.Flow("S9", 1, 1) },
        { "zero sigma", Measurement.Flow("S1", 1, 0) },
        { "negative sigma", Measurement.Flow("S1", 1, -1) },
        { "NaN sigma", Measurement.Flow("S1", 1, double.NaN) },
        { "NaN value", Measurement.Flow("S1", double.NaN, 1) },
        { "fraction of a flow-only network", Measurement.Fraction("S1", "a", 0.5, 0.01) },
    };

    [Theory]
    [MemberData(nameof(BadMeasurements))]
    public void Create_BadMeasurement_ThrowsNamingIt(string scenario, Measurement bad)
    {
        ArgumentException e = Assert.Throws<ArgumentException>(() =>
            ReconciliationProblem.Create(TestNetworks.HeatExchangerWithBypass(), [Measurement.Flow("S2", 1, 1), bad]));
        Assert.Contains("Measurement 1", e.Message, StringComparison.Ordinal);
        Assert.False(string.IsNullOrEmpty(scenario));
    }

    [Theory]
    [InlineData(-0.1)]
    [InlineData(1.1)]
    public void Create_FractionOutsideUnitInterval_Throws(double value)
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        ArgumentException e = Assert.Throws<ArgumentException>(() =>
            ReconciliationProblem.Create(network, [Measurement.Fraction("feed", "a", value, 0.01)]));
        Assert.Contains("feed fraction of a", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Create_UndeclaredComponentOrDuplicate_Throws()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        Assert.Throws<ArgumentException>(() => ReconciliationProblem.Create(network, [Measurement.Fraction("feed", "z", 0.1, 0.01)]));
        Assert.Throws<ArgumentException>(() => ReconciliationProblem.Create(network, [Measurement.Flow("feed", 1, 1), Measurement.Flow("feed", 2, 1)]));
    }
}
