using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

/// <summary>
/// The banded step of long trains against the dense projection (the reference): seeded random chains of 20 to 48
/// stages, random measured sets around the usual one, noisy readings. Estimates, sigmas and classification agree.
/// </summary>
public sealed class BandedReconciliationTests
{
    private static readonly ReconciliationOptions Dense = new() { DenseReference = true };

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(4)]
    public void Reconcile_RandomLongTrains_BandedAgreesWithDense(int seed)
    {
        var random = new Random(seed);
        for (int trial = 0; trial < 3; trial++)
        {
            int stages = random.Next(20, 49);
            ProcessNetwork train = TestNetworks.Train(stages);
            double[] truth = TestNetworks.TrainState(stages, 80 + (60 * random.NextDouble()), 120 + (80 * random.NextDouble()));
            var measurements = new List<Measurement>();
            for (int v = 0; v < train.QuantityCount; v++)
            {
                QuantityKey key = train.KeyAt(v);
                // The usual set, with some internal flows and solvent fractions measured too.
                if (!TestNetworks.IsMeasuredInTrain(key, stages) && random.NextDouble() >= 0.15)
                {
                    continue;
                }

                double sigma = TestNetworks.TrainSigma(key, truth[v]);
                double value = truth[v] + (sigma * TestNetworks.Gaussian(random));
                measurements.Add(new Measurement(key, key.Quantity == MeasuredQuantity.Fraction ? Math.Clamp(value, 0, 1) : value, sigma));
            }

            double[] readings = [.. measurements.Select(m => m.Value)];
            ReconciliationProblem banded = ReconciliationProblem.Create(train, measurements);
            ReconciliationProblem dense = ReconciliationProblem.Create(train, measurements, Dense);

            // Twice: the first solve of a layout starts dense, the second is banded from its first step.
            for (int pass = 0; pass < 2; pass++)
            {
                ReconciliationResult expected = dense.Reconcile(readings);
                ReconciliationResult actual = banded.Reconcile(readings);
                string where = $"seed {seed}, trial {trial}, {stages} stages, pass {pass}";
                Assert.True(banded.UsesBand, $"{where}: the banded step was not used");
                Assert.False(dense.UsesBand, where);
                Assert.Equal(expected.Status, actual.Status);
                Assert.Equal(expected.GlobalTest.DegreesOfFreedom, actual.GlobalTest.DegreesOfFreedom);
                Assert.True(Math.Abs(expected.GlobalTest.Statistic - actual.GlobalTest.Statistic) <= 1e-8 * Math.Max(1, expected.GlobalTest.Statistic), $"{where}: chi-square {actual.GlobalTest.Statistic:R} against {expected.GlobalTest.Statistic:R}");
                for (int i = 0; i < expected.Estimates.Count; i++)
                {
                    QuantityEstimate e = expected.Estimates[i], a = actual.Estimates[i];
                    Assert.True(e.Status == a.Status, $"{where}: {e.Key} is {a.Status}, dense {e.Status}");
                    double scale = e.Key.Quantity == MeasuredQuantity.Flow ? Math.Max(1, Math.Abs(e.Value)) : 1;
                    Assert.True(Close(e.Value, a.Value, scale), $"{where}: {e.Key} = {a.Value:R}, dense {e.Value:R}");
                    Assert.True(Close(e.Sigma, a.Sigma, scale), $"{where}: sigma of {e.Key} = {a.Sigma:R}, dense {e.Sigma:R}");
                }
            }
        }
    }

    [Theory]
    [InlineData(11)]
    [InlineData(12)]
    [InlineData(13)]
    [InlineData(14)]
    [InlineData(15)]
    [InlineData(16)]
    public void Reconcile_RandomLongTrains_BandedCovarianceAndTestsAgreeWithDense(int seed)
    {
        // The usual set with some internal flows and solvent fractions measured too (classification and covariance of
        // a layout whose closing factorisation is on the band), readings now and then pushed beyond a bound (a fraction
        // read as zero: a layout with held values and their multipliers).
        var random = new Random(seed);
        int closedOnBand = 0;
        for (int trial = 0; trial < 3; trial++)
        {
            int stages = random.Next(12, 49);
            ProcessNetwork train = TestNetworks.Train(stages);
            double[] truth = TestNetworks.TrainState(stages, 80 + (60 * random.NextDouble()), 120 + (80 * random.NextDouble()));
            var measurements = new List<Measurement>();
            for (int v = 0; v < train.QuantityCount; v++)
            {
                QuantityKey key = train.KeyAt(v);
                if (!TestNetworks.IsMeasuredInTrain(key, stages) && random.NextDouble() >= 0.2)
                {
                    continue;
                }

                double sigma = TestNetworks.TrainSigma(key, truth[v]);
                double value = truth[v] + (sigma * TestNetworks.Gaussian(random) * (random.NextDouble() < 0.03 ? 8 : 1));
                measurements.Add(new Measurement(key, key.Quantity == MeasuredQuantity.Fraction ? Math.Clamp(value, 0, 1) : value, sigma));
            }

            double[] readings = [.. measurements.Select(m => m.Value)];
            ReconciliationProblem banded = ReconciliationProblem.Create(train, measurements);
            ReconciliationProblem dense = ReconciliationProblem.Create(train, measurements, Dense);
            for (int pass = 0; pass < 2; pass++)
            {
                ReconciliationResult expected = dense.Reconcile(readings);
                ReconciliationResult actual = banded.Reconcile(readings);
                string where = $"seed {seed}, trial {trial}, {stages} stages, pass {pass}";
                // A short train with many extra measurements may stay dense (the band would not be much cheaper).
                Assert.True(banded.ClosedOnBand == banded.UsesBand, $"{where}: banded steps {banded.UsesBand}, closed on the band {banded.ClosedOnBand}");
                closedOnBand += banded.ClosedOnBand ? 1 : 0;
                Assert.False(dense.ClosedOnBand, where);
                Assert.Equal(expected.Status, actual.Status);
                Assert.Equal(expected.ActiveBounds, actual.ActiveBounds);
                GlobalTest eg = expected.GlobalTest, ag = actual.GlobalTest;
                Assert.Equal(eg.DegreesOfFreedom, ag.DegreesOfFreedom);
                Assert.Equal(eg.Passed, ag.Passed);
                Assert.True(Math.Abs(eg.Statistic - ag.Statistic) <= 1e-8 * Math.Max(1, eg.Statistic), $"{where}: chi-square {ag.Statistic:R} against {eg.Statistic:R}");
                Assert.True(Math.Abs(eg.PValue - ag.PValue) <= 1e-8, $"{where}: p {ag.PValue:R} against {eg.PValue:R}");
                for (int i = 0; i < expected.Estimates.Count; i++)
                {
                    QuantityEstimate e = expected.Estimates[i], a = actual.Estimates[i];
                    Assert.True(e.Status == a.Status, $"{where}: {e.Key} is {a.Status}, dense {e.Status}");
                    Assert.Equal(e.AtBound, a.AtBound);
                    double scale = e.Key.Quantity == MeasuredQuantity.Flow ? Math.Max(1, Math.Abs(e.Value)) : 1;
                    Assert.True(Close(e.Value, a.Value, scale), $"{where}: {e.Key} = {a.Value:R}, dense {e.Value:R}");
                    Assert.True(Close(e.Sigma, a.Sigma, scale), $"{where}: sigma of {e.Key} = {a.Sigma:R}, dense {e.Sigma:R}");
                }

                // The measurement tests: the same redundant measurements, adjustments and normalised adjustments (the
                // adjustment's variance from the band).
                Assert.Equal(expected.MeasurementTests.Select(t => t.Key), actual.MeasurementTests.Select(t => t.Key));
                for (int i = 0; i < expected.MeasurementTests.Count; i++)
                {
                    MeasurementTest e = expected.MeasurementTests[i], a = actual.MeasurementTests[i];
                    double scale = e.Key.Quantity == MeasuredQuantity.Flow ? Math.Max(1, Math.Abs(banded.MeasuredQuantities.Contains(e.Key) ? readings[banded.MeasuredQuantities.ToList().IndexOf(e.Key)] : 1)) : 1;
                    Assert.True(Close(e.Adjustment, a.Adjustment, scale), $"{where}: adjustment of {e.Key} = {a.Adjustment:R}, dense {e.Adjustment:R}");
                    Assert.True(Math.Abs(e.Normalized - a.Normalized) <= 1e-7 * Math.Max(1, Math.Abs(e.Normalized)), $"{where}: normalised adjustment of {e.Key} = {a.Normalized:R}, dense {e.Normalized:R}");
                    Assert.Equal(e.Critical, a.Critical);
                    Assert.Equal(e.Suspect, a.Suspect);
                }
            }
        }

        Assert.True(closedOnBand >= 2, $"seed {seed}: only {closedOnBand} of 6 solves closed on the band");
    }

    // Within 1e-10 of the scale, or both not a number (an unobservable quantity has no value).
    private static bool Close(double expected, double actual, double scale) =>
        (double.IsNaN(expected) && double.IsNaN(actual)) || Math.Abs(expected - actual) <= 1e-10 * scale;

    [Fact]
    public void Create_ShortTrain_StaysOnTheDensePath()
    {
        ProcessNetwork train = TestNetworks.Train(6);
        double[] truth = TestNetworks.TrainState(6);
        var measurements = new List<Measurement>();
        for (int v = 0; v < train.QuantityCount; v++)
        {
            QuantityKey key = train.KeyAt(v);
            if (TestNetworks.IsMeasuredInTrain(key, 6))
            {
                measurements.Add(new Measurement(key, truth[v], TestNetworks.TrainSigma(key, truth[v])));
            }
        }

        ReconciliationProblem problem = ReconciliationProblem.Create(train, measurements);
        Assert.True(problem.Reconcile().Succeeded);
        Assert.False(problem.UsesBand);
    }
}
