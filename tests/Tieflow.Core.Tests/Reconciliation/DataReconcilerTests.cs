using FsCheck;
using FsCheck.Fluent;
using Tieflow.Core.Reconciliation;
using Xunit.Abstractions;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class DataReconcilerTests(ITestOutputHelper output)
{
    [Fact]
    public void Reconcile_HeatExchangerVariant_NamesStreamTwoAsTheOnlySuspect()
    {
        // Constructed variant of Narasimhan and Jordache's heat exchanger with bypass (docs/reference-data.md
        // section 4): +5 on stream 2 makes stream 2 the suspect.
        double[] readings = [.. TestNetworks.HeatExchangerReadings];
        readings[1] += 5;
        ReconciliationReport report = DataReconciler.Reconcile(
            TestNetworks.HeatExchangerWithBypass(), TestNetworks.HeatExchangerMeasurements(readings));

        Assert.Equal([QuantityKey.FlowOf("S2")], report.Suspects);
        Assert.False(report.Initial.GlobalTest.Passed);
        Assert.True(report.Final.GlobalTest.Passed);
        Assert.Equal(3, report.Final.GlobalTest.DegreesOfFreedom);
        Assert.Equal(QuantityStatus.Observable, report.Final.Flow("S2").Status);
    }

    [Fact]
    public void Reconcile_HeatExchangerReference_HasNoSuspect()
    {
        ReconciliationReport report = DataReconciler.Reconcile(
            TestNetworks.HeatExchangerWithBypass(), TestNetworks.HeatExchangerMeasurements(TestNetworks.HeatExchangerReadings));
        Assert.Empty(report.Suspects);
        Assert.Same(report.Initial, report.Final);
    }

    [Fact]
    public void Reconcile_PureNoise_GlobalTestRejectsAboutFivePercent()
    {
        // Under pure measurement noise the statistic is chi-square with dof = rank of the projected balances, so
        // the test at 0.05 rejects 5 % of cases; 3000 seeded trials give a binomial standard error of 0.4 %.
        ProcessNetwork network = TestNetworks.ElevenNodeNetwork();
        var random = new Random(11);
        double[] truth = TestNetworks.ConsistentFlows(network, random);
        Assert.All(truth, f => Assert.True(f > 0));
        double[] sigma = [.. truth.Select(f => 0.02 * f)];
        ReconciliationProblem problem = ReconciliationProblem.Create(
            network, [.. network.Streams.Select((s, i) => Measurement.Flow(s.Id, truth[i], sigma[i]))]);
        const int Trials = 3000;
        int rejected = 0;
        var readings = new double[truth.Length];
        for (int t = 0; t < Trials; t++)
        {
            for (int i = 0; i < readings.Length; i++)
            {
                readings[i] = truth[i] + (sigma[i] * TestNetworks.Gaussian(random));
            }

            if (!problem.Reconcile(readings).GlobalTest.Passed)
            {
                rejected++;
            }
        }

        double rate = (double)rejected / Trials;
        output.WriteLine($"flow-only rejection rate {rate:P2}");
        Assert.InRange(rate, 0.03, 0.07);
    }

    [Fact]
    public void Reconcile_PureNoiseOnTernaryTrain_GlobalTestRejectsAboutFivePercent()
    {
        // The bilinear statistic is chi-square only to first order; with 1 % noise the linearisation is good.
        ProcessNetwork network = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        var random = new Random(12);
        List<Measurement> template = TestNetworks.TrainMeasurements(network, truth, random, noiseScale: 0);
        ReconciliationProblem problem = ReconciliationProblem.Create(network, template);
        const int Trials = 2000;
        int rejected = 0;
        var readings = new double[template.Count];
        for (int t = 0; t < Trials; t++)
        {
            for (int i = 0; i < readings.Length; i++)
            {
                readings[i] = template[i].Value + (template[i].Sigma * TestNetworks.Gaussian(random));
                if (template[i].Key.Quantity == MeasuredQuantity.Fraction)
                {
                    readings[i] = Math.Clamp(readings[i], 0, 1);
                }
            }

            if (!problem.Reconcile(readings).GlobalTest.Passed)
            {
                rejected++;
            }
        }

        output.WriteLine($"ternary rejection rate {(double)rejected / Trials:P2}");
        Assert.InRange((double)rejected / Trials, 0.03, 0.07);
    }

    [Fact]
    public void Reconcile_SingleLargeBias_IsTheFirstSuspectInNinetyPercentOfTrials()
    {
        // A bias of 10 sigma on one randomly chosen measurement of the 28-stream network, 500 seeded trials. Every meter
        // has the same sigma: with sigmas proportional to very different flows, a precise meter on a small stream is
        // checked only by imprecise neighbours and a 10-sigma bias on it is not large for the balances.
        ProcessNetwork network = TestNetworks.ElevenNodeNetwork();
        var random = new Random(13);
        double[] truth = TestNetworks.ConsistentFlows(network, random);
        const int Trials = 500;
        int identified = 0;
        for (int t = 0; t < Trials; t++)
        {
            int biased = random.Next(truth.Length);
            var measurements = new List<Measurement>();
            for (int i = 0; i < truth.Length; i++)
            {
                const double sigma = 2.0;
                double value = truth[i] + (sigma * TestNetworks.Gaussian(random)) + (i == biased ? 10 * sigma : 0);
                measurements.Add(Measurement.Flow(network.Streams[i].Id, value, sigma));
            }

            ReconciliationReport report = DataReconciler.Reconcile(network, measurements);
            if (report.Suspects.Count > 0 && report.Suspects[0] == QuantityKey.FlowOf(network.Streams[biased].Id))
            {
                identified++;
            }
        }

        output.WriteLine($"identified {identified} of {Trials}");
        Assert.True(identified >= 0.9 * Trials, $"{identified} of {Trials}");
    }

    [Fact]
    public void Reconcile_NoisyTernaryTrain_IsCloserToTruthThanTheMeasurements()
    {
        // Truth from the split-fraction stage balance of TestNetworks (not the cascade solver); 200 seeded trials,
        // RMS of the errors in units of sigma over the measured quantities.
        ProcessNetwork network = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        var random = new Random(14);
        double measuredSquares = 0;
        double reconciledSquares = 0;
        int count = 0;
        for (int t = 0; t < 200; t++)
        {
            List<Measurement> measurements = TestNetworks.TrainMeasurements(network, truth, random);
            ReconciliationResult result = ReconciliationProblem.Create(network, measurements).Reconcile();
            foreach (Measurement m in measurements)
            {
                double trueValue = truth[network.IndexOf(m.Key)];
                measuredSquares += Math.Pow((m.Value - trueValue) / m.Sigma, 2);
                reconciledSquares += Math.Pow((result[m.Key].Value - trueValue) / m.Sigma, 2);
                count++;
            }
        }

        double measuredRms = Math.Sqrt(measuredSquares / count);
        double reconciledRms = Math.Sqrt(reconciledSquares / count);
        output.WriteLine($"RMS reconciled {reconciledRms:F3}, measured {measuredRms:F3}");
        Assert.True(reconciledRms < 0.9 * measuredRms, $"reconciled {reconciledRms}, measured {measuredRms}");
    }

    [FsCheck.Xunit.Property(MaxTest = 100, Replay = "(11,13)")]
    public Property Reconcile_RandomTrainNoise_SatisfiesEveryBalance()
    {
        // Any seed and noise level up to 3 times the stated sigmas: the estimates close every balance to 1e-9 relative.
        return Prop.ForAll(
            Gen.Choose(0, int.MaxValue).ToArbitrary(),
            Gen.Choose(1, 30).ToArbitrary(),
            (seed, tenths) =>
            {
                ProcessNetwork network = TestNetworks.SixStageTrain();
                List<Measurement> measurements = TestNetworks.TrainMeasurements(
                    network, TestNetworks.SixStageTrainState(), new Random(seed), tenths / 10.0);
                ReconciliationResult result = ReconciliationProblem.Create(network, measurements).Reconcile();
                return TestNetworks.WorstRelativeResidual(result) < 1e-9;
            });
    }

    [FsCheck.Xunit.Property(MaxTest = 100, Replay = "(17,19)")]
    public Property Reconcile_ConsistentFlows_AreNotAdjusted()
    {
        return Prop.ForAll(Gen.Choose(0, int.MaxValue).ToArbitrary(), seed =>
        {
            ProcessNetwork network = TestNetworks.ElevenNodeNetwork();
            double[] truth = TestNetworks.ConsistentFlows(network, new Random(seed));
            ReconciliationResult result = ReconciliationProblem.Create(
                network, [.. network.Streams.Select((s, i) => Measurement.Flow(s.Id, truth[i], 1 + (i % 3)))]).Reconcile();
            return result.Estimates.Select((e, i) => Math.Abs(e.Value - truth[i]) <= 1e-9 * Math.Abs(truth[i])).All(ok => ok)
                && result.GlobalTest.Statistic < 1e-12;
        });
    }
}
