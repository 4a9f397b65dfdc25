using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class ReconciliationPropertyTests
{
    [Theory]
    [InlineData(0.0)]
    [InlineData(1.0)]
    public void Reconcile_RandomConsistentNetworks_ConvergeWithinBounds(double noise)
    {
        var random = new Random(12);
        var failures = new List<string>();
        for (int trial = 0; trial < 200; trial++)
        {
            (ProcessNetwork network, double[] state) = RandomNetworks.Create(random);
            double share = 0.2 + (0.8 * random.NextDouble());
            List<Measurement> measurements = RandomNetworks.Measure(network, state, random, share, noise);
            ReconciliationProblem problem = ReconciliationProblem.Create(network, measurements);
            if (!problem.TryReconcile([.. measurements.Select(m => m.Value)], out ReconciliationResult result))
            {
                failures.Add($"trial {trial}: {result.Message}");
                continue;
            }

            foreach (QuantityEstimate e in result.Estimates.Where(e => e.HasValue))
            {
                bool flow = e.Key.Quantity == MeasuredQuantity.Flow;
                if (!(e.Value >= 0 && (flow || e.Value <= 1)) || !double.IsFinite(e.Sigma))
                {
                    failures.Add($"trial {trial}: {e.Key} = {e.Value} (sigma {e.Sigma})");
                }

                // Without noise the readings are consistent and nothing is adjusted. (Unmeasured quantities are not
                // compared: linearised observability at a point of a curved set of solutions does not make them unique.)
                if (noise == 0 && e.Measured is not null && Math.Abs(e.Value - state[network.IndexOf(e.Key)]) > 1e-6 * Math.Max(1, state[network.IndexOf(e.Key)]))
                {
                    failures.Add($"trial {trial}: {e.Key} = {e.Value}, true {state[network.IndexOf(e.Key)]}");
                }
            }

            if (TestNetworks.WorstRelativeResidualOfObservable(result) > 1e-8)
            {
                failures.Add($"trial {trial}: residual {TestNetworks.WorstRelativeResidualOfObservable(result)}");
            }
        }

        Assert.True(failures.Count == 0, string.Join(Environment.NewLine, failures.Take(20)) + $"{Environment.NewLine}({failures.Count} in all)");
    }

    [Fact]
    public void Reconcile_NothingMeasured_EverythingUnobservable()
    {
        var random = new Random(5);
        for (int trial = 0; trial < 20; trial++)
        {
            (ProcessNetwork network, _) = RandomNetworks.Create(random);
            ReconciliationResult result = ReconciliationProblem.Create(network, []).Reconcile();
            Assert.Equal(ReconciliationStatus.NothingRedundant, result.Status);
            Assert.All(result.Estimates, e => Assert.Equal(QuantityStatus.Unobservable, e.Status));
        }

        ReconciliationResult train = ReconciliationProblem.Create(TestNetworks.SixStageTrain(), []).Reconcile();
        Assert.All(train.Estimates, e => Assert.False(e.HasValue));
    }
}
