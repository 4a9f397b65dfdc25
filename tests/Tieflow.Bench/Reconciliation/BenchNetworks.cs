using MathNet.Numerics.LinearAlgebra;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Bench.Reconciliation;

/// <summary>
/// The benchmark networks: the same six-stage train and 28-stream network as the unit tests
/// (tests/Tieflow.Core.Tests/Reconciliation/TestNetworks.cs), repeated here so that the benchmarks do not depend on the test project.
/// </summary>
internal static class BenchNetworks
{
    public static ProcessNetwork ElevenNodeNetwork()
    {
        var streams = new List<NetworkStream>
        {
            new("F1", null, "N1"), new("F4", null, "N4"), new("F8", null, "N8"),
            new("P6", "N6", null), new("P9", "N9", null), new("P11", "N11", null),
        };
        for (int i = 1; i <= 10; i++)
        {
            streams.Add(new NetworkStream($"C{i}", $"N{i}", $"N{i + 1}"));
        }

        for (int i = 1; i <= 9; i++)
        {
            streams.Add(new NetworkStream($"B{i}", $"N{i}", $"N{i + 2}"));
        }

        streams.Add(new NetworkStream("R5", "N5", "N2"));
        streams.Add(new NetworkStream("R9", "N9", "N6"));
        streams.Add(new NetworkStream("R11", "N11", "N7"));
        return new ProcessNetwork(Enumerable.Range(1, 11).Select(i => $"N{i}"), streams);
    }

    public static double[] ConsistentFlows(ProcessNetwork network, Random random)
    {
        int ns = network.Streams.Count;
        var a = Matrix<double>.Build.Dense(network.Nodes.Count, ns);
        for (int s = 0; s < ns; s++)
        {
            NetworkStream stream = network.Streams[s];
            if (stream.To is not null)
            {
                a[network.IndexOfNode(stream.To), s] += 1;
            }

            if (stream.From is not null)
            {
                a[network.IndexOfNode(stream.From), s] -= 1;
            }
        }

        var t = Vector<double>.Build.Dense(ns, _ => 80 + (40 * random.NextDouble()));
        return [.. t - (a.Transpose() * (a * a.Transpose()).Solve(a * t))];
    }

    public static ProcessNetwork SixStageTrain()
    {
        var streams = new List<NetworkStream> { new("feed", null, "stage1"), new("solvent", null, "stage6") };
        for (int k = 1; k <= 6; k++)
        {
            streams.Add(new NetworkStream($"R{k}", $"stage{k}", k < 6 ? $"stage{k + 1}" : null));
            streams.Add(new NetworkStream($"E{k}", $"stage{k}", k > 1 ? $"stage{k - 1}" : null));
        }

        return new ProcessNetwork(Enumerable.Range(1, 6).Select(k => $"stage{k}"), streams, ["a", "b", "c"]);
    }

    // Fixed split fraction of each component per stage (a simple consistent stage balance, not an equilibrium cascade).
    public static double[] SixStageTrainState()
    {
        double[] feed = [0.30, 0.69, 0.01];
        double[] solvent = [0.005, 0.01, 0.985];
        double[] share = [0.45, 0.97, 0.04];
        const int N = 6;
        var state = new double[14 * 4];
        state[0] = 100;
        state[4] = 150;
        for (int c = 0; c < 3; c++)
        {
            state[1 + c] = feed[c];
            state[5 + c] = solvent[c];
        }

        var flows = new double[2 * N, 3];
        for (int c = 0; c < 3; c++)
        {
            var m = Matrix<double>.Build.Dense(2 * N, 2 * N);
            var rhs = Vector<double>.Build.Dense(2 * N);
            for (int k = 0; k < N; k++)
            {
                foreach ((int row, double s) in new[] { (k, share[c]), (N + k, 1 - share[c]) })
                {
                    m[row, row] = 1;
                    if (k > 0)
                    {
                        m[row, k - 1] -= s;
                    }
                    else
                    {
                        rhs[row] += s * 100 * feed[c];
                    }

                    if (k < N - 1)
                    {
                        m[row, N + k + 1] -= s;
                    }
                    else
                    {
                        rhs[row] += s * 150 * solvent[c];
                    }
                }
            }

            Vector<double> x = m.Solve(rhs);
            for (int i = 0; i < 2 * N; i++)
            {
                flows[i, c] = x[i];
            }
        }

        for (int k = 0; k < N; k++)
        {
            for (int phase = 0; phase < 2; phase++)
            {
                int row = phase == 0 ? k : N + k;
                int stream = 2 + (2 * k) + phase;
                double total = flows[row, 0] + flows[row, 1] + flows[row, 2];
                state[stream * 4] = total;
                for (int c = 0; c < 3; c++)
                {
                    state[(stream * 4) + 1 + c] = flows[row, c] / total;
                }
            }
        }

        return state;
    }

    public static bool IsMeasuredInTrain(QuantityKey key) =>
        key.Stream is "feed" or "solvent" or "R6" or "E1" || key.Component is "a" or "b";

    public static double Gaussian(Random random)
    {
        double u1 = 1.0 - random.NextDouble();
        double u2 = random.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
