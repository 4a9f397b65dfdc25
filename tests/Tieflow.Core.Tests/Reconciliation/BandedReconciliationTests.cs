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
