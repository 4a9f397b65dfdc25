using MathNet.Numerics.LinearAlgebra;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

/// <summary>
/// The standard deviations of a bilinear reconciliation against an independent computation of the same linearised
/// covariance: the full KKT system of the weighted least-squares problem at the solution, inverted with MathNet
/// (a general-purpose library), without projection and without substituting any closure.
/// </summary>
public sealed class ReconciliationCovarianceTests
{
    [Fact]
    public void Reconcile_NoisyTernaryTrain_SigmasMatchKktCovariance()
    {
        ProcessNetwork network = TestNetworks.SixStageTrain();
        List<Measurement> measurements = TestNetworks.TrainMeasurements(network, TestNetworks.SixStageTrainState(), new Random(21));
        ReconciliationResult result = ReconciliationProblem.Create(network, measurements).Reconcile();

        int n = network.QuantityCount;
        int nc = network.Components.Count;
        int nn = network.Nodes.Count;
        int ns = network.Streams.Count;
        int m = (nn * nc) + ns;
        double[] z = [.. result.Estimates.Select(e => e.Value)];

        // Jacobian of the component balances and closures at the solution, all quantities in network order.
        Matrix<double> j = Matrix<double>.Build.Dense(m, n);
        for (int s = 0; s < ns; s++)
        {
            NetworkStream stream = network.Streams[s];
            foreach ((string? node, double sign) in new[] { (stream.To, 1.0), (stream.From, -1.0) })
            {
                if (node is null)
                {
                    continue;
                }

                int nodeIndex = network.IndexOfNode(node);
                for (int c = 0; c < nc; c++)
                {
                    j[(nodeIndex * nc) + c, s * (nc + 1)] += sign * z[(s * (nc + 1)) + 1 + c];
                    j[(nodeIndex * nc) + c, (s * (nc + 1)) + 1 + c] += sign * z[s * (nc + 1)];
                }
            }

            for (int c = 0; c < nc; c++)
            {
                j[(nn * nc) + s, (s * (nc + 1)) + 1 + c] = 1;
            }
        }

        // KKT: [W 0 J'; J 0] with W the inverse measurement covariance on the measured quantities, zero elsewhere.
        Matrix<double> kkt = Matrix<double>.Build.Dense(n + m, n + m);
        var weight = new double[n];
        foreach (Measurement meas in measurements)
        {
            weight[network.IndexOf(meas.Key)] = 1 / (meas.Sigma * meas.Sigma);
        }

        for (int v = 0; v < n; v++)
        {
            kkt[v, v] = weight[v];
        }

        kkt.SetSubMatrix(0, n, j.Transpose());
        kkt.SetSubMatrix(n, 0, j);
        Matrix<double> inverse = kkt.Inverse();

        // d(estimate)/d(y_k) = inverse[:, k] * w_k, so Cov = sum_k inverse[:, k] inverse[:, k]' w_k^2 sigma_k^2.
        foreach (QuantityEstimate e in result.Estimates)
        {
            int v = network.IndexOf(e.Key);
            double variance = 0;
            foreach (Measurement meas in measurements)
            {
                int k = network.IndexOf(meas.Key);
                double sensitivity = inverse[v, k] * weight[k];
                variance += sensitivity * sensitivity * meas.Sigma * meas.Sigma;
            }

            double expected = Math.Sqrt(variance);
            Assert.True(Math.Abs(e.Sigma - expected) <= 1e-7 * Math.Max(expected, 1e-6), $"{e.Key}: {e.Sigma} vs {expected}");
        }
    }
}
