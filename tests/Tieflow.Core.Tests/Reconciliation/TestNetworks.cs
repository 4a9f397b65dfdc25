using MathNet.Numerics.LinearAlgebra;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

/// <summary>Networks and consistent states shared by the reconciliation tests.</summary>
internal static class TestNetworks
{
    /// <summary>Component order of the ternary train: solute, diluent, solvent.</summary>
    public static readonly string[] TernaryComponents = ["a", "b", "c"];

    // Heat exchanger with bypass: Narasimhan and Jordache, "Data Reconciliation and Gross Error Detection" (Gulf, 2000),
    // as reproduced in docs/reference-data.md §4. Splitter F1 = F2 + F3, exchanger F2 = F4,
    // bypass F3 = F5, mixer F4 + F5 = F6.
    public static ProcessNetwork HeatExchangerWithBypass() => new(
        ["splitter", "exchanger", "bypass", "mixer"],
        [
            new NetworkStream("S1", null, "splitter"),
            new NetworkStream("S2", "splitter", "exchanger"),
            new NetworkStream("S3", "splitter", "bypass"),
            new NetworkStream("S4", "exchanger", "mixer"),
            new NetworkStream("S5", "bypass", "mixer"),
            new NetworkStream("S6", "mixer", null),
        ]);

    /// <summary>Readings of the heat-exchanger example (same source as the network), sigma 1 for every flow.</summary>
    public static readonly double[] HeatExchangerReadings = [101.91, 64.45, 34.65, 64.20, 36.44, 98.88];

    public static List<Measurement> HeatExchangerMeasurements(double[] readings) =>
        [.. readings.Select((v, i) => Measurement.Flow($"S{i + 1}", v, 1.0))];

    /// <summary>
    /// An invented 11-node, 28-stream flow-only network: a chain with bypasses over one node and three recycles,
    /// three feeds and three products.
    /// </summary>
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

    /// <summary>A consistent flow state of a flow-only network: targets projected onto the null space of the balances.</summary>
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
        Vector<double> f = t - (a.Transpose() * (a * a.Transpose()).Solve(a * t));
        return [.. f];
    }

    /// <summary>Six-stage counter-current train: feed into stage 1, solvent into stage 6, 14 streams.</summary>
    public static ProcessNetwork SixStageTrain() => Train(6);

    /// <summary>Counter-current train of N stages: feed into stage 1, solvent into stage N, 2 N + 2 streams.</summary>
    public static ProcessNetwork Train(int stages)
    {
        var streams = new List<NetworkStream> { new("feed", null, "stage1"), new("solvent", null, $"stage{stages}") };
        for (int k = 1; k <= stages; k++)
        {
            streams.Add(new NetworkStream($"R{k}", $"stage{k}", k < stages ? $"stage{k + 1}" : null));
            streams.Add(new NetworkStream($"E{k}", $"stage{k}", k > 1 ? $"stage{k - 1}" : null));
        }

        return new ProcessNetwork(Enumerable.Range(1, stages).Select(k => $"stage{k}"), streams, TernaryComponents);
    }

    /// <summary>
    /// A consistent state of <see cref="SixStageTrain"/>, as (flow, a, b, c) per stream in network order. Not a cascade
    /// of the equilibrium models: each stage splits every component of its mixed inlets between raffinate and extract
    /// in a fixed proportion (a simple stage balance written for the tests, so that they stay independent of the cascade
    /// solver). The six stage balances of each component are solved as one linear system.
    /// </summary>
    public static double[] SixStageTrainState(double feedFlow = 100, double solventFlow = 150) => TrainState(6, feedFlow, solventFlow);

    /// <summary>A consistent state of <see cref="Train"/> with N stages, built as <see cref="SixStageTrainState"/>.</summary>
    public static double[] TrainState(int stages, double feedFlow = 100, double solventFlow = 150)
    {
        double[] feed = [0.30, 0.69, 0.01];
        double[] solvent = [0.005, 0.01, 0.985];
        double[] raffinateShare = [0.45, 0.97, 0.04];
        int n = stages;
        var raffinate = new double[n, 3];
        var extract = new double[n, 3];
        for (int c = 0; c < 3; c++)
        {
            // Unknowns R1..R6 (0..5) and E1..E6 (6..11): R_k = phi (R_k-1 + E_k+1), E_k = (1 - phi)(R_k-1 + E_k+1).
            var m = Matrix<double>.Build.Dense(2 * n, 2 * n);
            var rhs = Vector<double>.Build.Dense(2 * n);
            double phi = raffinateShare[c];
            for (int k = 0; k < n; k++)
            {
                foreach ((int row, double share) in new[] { (k, phi), (n + k, 1 - phi) })
                {
                    m[row, row] = 1;
                    if (k > 0)
                    {
                        m[row, k - 1] -= share;
                    }
                    else
                    {
                        rhs[row] += share * feedFlow * feed[c];
                    }

                    if (k < n - 1)
                    {
                        m[row, n + k + 1] -= share;
                    }
                    else
                    {
                        rhs[row] += share * solventFlow * solvent[c];
                    }
                }
            }

            Vector<double> x = m.Solve(rhs);
            for (int k = 0; k < n; k++)
            {
                raffinate[k, c] = x[k];
                extract[k, c] = x[n + k];
            }
        }

        var state = new List<double> { feedFlow };
        state.AddRange(feed);
        state.Add(solventFlow);
        state.AddRange(solvent);
        for (int k = 0; k < n; k++)
        {
            foreach (double[,] phase in new[] { raffinate, extract })
            {
                double total = phase[k, 0] + phase[k, 1] + phase[k, 2];
                state.Add(total);
                for (int c = 0; c < 3; c++)
                {
                    state.Add(phase[k, c] / total);
                }
            }
        }

        return [.. state];
    }

    /// <summary>
    /// Which quantities of the train are measured: everything of the four boundary streams (named as in the six-stage
    /// train; for another stage count see <see cref="IsMeasuredInTrain(QuantityKey, int)"/>), and the solute and
    /// diluent fractions of the ten internal streams; the other 20 of 56 quantities (36 %: internal flows and
    /// solvent fractions) are unmeasured.
    /// </summary>
    public static bool IsMeasuredInTrain(QuantityKey key) => IsMeasuredInTrain(key, 6);

    /// <summary>As <see cref="IsMeasuredInTrain(QuantityKey)"/> for a train of N stages (the final raffinate is R N).</summary>
    public static bool IsMeasuredInTrain(QuantityKey key, int stages) =>
        key.Stream == "feed" || key.Stream == "solvent" || key.Stream == $"R{stages}" || key.Stream == "E1" || key.Component is "a" or "b";

    /// <summary>Standard deviations used for the train: 1 % of the flow, 0.002 on fractions.</summary>
    public static double TrainSigma(QuantityKey key, double trueValue) =>
        key.Quantity == MeasuredQuantity.Flow ? 0.01 * trueValue : 0.002;

    /// <summary>Noisy measurements of the train around a true state (fractions clipped to [0, 1]).</summary>
    public static List<Measurement> TrainMeasurements(ProcessNetwork network, double[] truth, Random random, double noiseScale = 1)
    {
        var list = new List<Measurement>();
        for (int v = 0; v < network.QuantityCount; v++)
        {
            QuantityKey key = network.KeyAt(v);
            if (!IsMeasuredInTrain(key))
            {
                continue;
            }

            double sigma = TrainSigma(key, truth[v]);
            double value = truth[v] + (noiseScale * sigma * Gaussian(random));
            if (key.Quantity == MeasuredQuantity.Fraction)
            {
                value = Math.Clamp(value, 0, 1);
            }

            list.Add(new Measurement(key, value, sigma));
        }

        return list;
    }

    /// <summary>Standard normal deviate (Box-Muller) from a seeded generator.</summary>
    public static double Gaussian(Random random)
    {
        double u1 = 1.0 - random.NextDouble();
        double u2 = random.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }

    /// <summary>Largest balance residual of a network at the estimates, relative to the sum of absolute terms.</summary>
    public static double WorstRelativeResidual(ReconciliationResult result)
    {
        ProcessNetwork network = result.Network;
        double Value(string stream, int c) => c < 0 ? result.Flow(stream).Value : result.Fraction(stream, network.Components[c]).Value;
        double worst = 0;
        int nc = network.Components.Count;
        foreach (string node in network.Nodes)
        {
            for (int c = nc == 0 ? -1 : 0; c < Math.Max(nc, 0); c++)
            {
                double sum = 0;
                double abs = 0;
                foreach (NetworkStream s in network.Streams)
                {
                    double sign = s.To == node ? 1 : s.From == node ? -1 : 0;
                    if (sign == 0)
                    {
                        continue;
                    }

                    double term = c < 0 ? Value(s.Id, -1) : Value(s.Id, -1) * Value(s.Id, c);
                    sum += sign * term;
                    abs += Math.Abs(term);
                }

                worst = Math.Max(worst, Math.Abs(sum) / abs);
            }
        }

        if (nc > 0)
        {
            foreach (NetworkStream s in network.Streams)
            {
                double sum = 0;
                for (int c = 0; c < nc; c++)
                {
                    sum += Value(s.Id, c);
                }

                worst = Math.Max(worst, Math.Abs(sum - 1));
            }
        }

        return worst;
    }

    /// <summary>
    /// As <see cref="WorstRelativeResidual"/>, over the balances whose every term has a value (balances touching an
    /// unobservable quantity are skipped), and with the sum of absolute terms floored at 1 % of the largest flow (at
    /// least 1 % of one flow unit).
    /// </summary>
    public static double WorstRelativeResidualOfObservable(ReconciliationResult result)
    {
        ProcessNetwork network = result.Network;
        double Value(string stream, int c) => c < 0 ? result.Flow(stream).Value : result.Fraction(stream, network.Components[c]).Value;
        double largest = Math.Max(1, network.Streams.Select(s => Value(s.Id, -1)).Where(double.IsFinite).DefaultIfEmpty(1).Max());
        double worst = 0;
        int nc = network.Components.Count;
        foreach (string node in network.Nodes)
        {
            for (int c = nc == 0 ? -1 : 0; c < Math.Max(nc, 0); c++)
            {
                double sum = 0;
                double abs = 0;
                foreach (NetworkStream s in network.Streams)
                {
                    double sign = s.To == node ? 1 : s.From == node ? -1 : 0;
                    if (sign == 0)
                    {
                        continue;
                    }

                    double term = c < 0 ? Value(s.Id, -1) : Value(s.Id, -1) * Value(s.Id, c);
                    sum += sign * term;
                    abs += Math.Abs(term);
                }

                if (double.IsFinite(sum))
                {
                    worst = Math.Max(worst, Math.Abs(sum) / Math.Max(abs, 0.01 * largest));
                }
            }
        }

        foreach (NetworkStream s in network.Streams)
        {
            double sum = 0;
            for (int c = 0; c < nc; c++)
            {
                sum += Value(s.Id, c);
            }

            if (nc > 0 && double.IsFinite(sum))
            {
                worst = Math.Max(worst, Math.Abs(sum - 1));
            }
        }

        return worst;
    }
}
