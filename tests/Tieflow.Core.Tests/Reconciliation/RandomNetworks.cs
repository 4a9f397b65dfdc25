using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

/// <summary>Seeded random networks with consistent states, for property tests of the reconciliation.</summary>
internal static class RandomNetworks
{
    /// <summary>
    /// A random acyclic network of 2 to 8 nodes with components a, b, c: each node mixes one or two feeds or outlets of
    /// earlier nodes and splits every component between two or three outlets in random shares, so that the state is
    /// consistent with every flow above zero. Returns the network and its state in network order.
    /// </summary>
    public static (ProcessNetwork Network, double[] State) Create(Random random)
    {
        int nodes = random.Next(2, 9);
        string[] components = ["a", "b", "c"];
        var streams = new List<NetworkStream>();
        var componentFlows = new List<double[]>();
        var open = new List<int>();
        for (int node = 0; node < nodes; node++)
        {
            string id = $"N{node + 1}";
            var mixed = new double[3];
            int inlets = open.Count == 0 ? 1 : random.Next(1, 3);
            for (int i = 0; i < inlets; i++)
            {
                if (open.Count > 0 && random.NextDouble() < 0.8)
                {
                    int pick = open[random.Next(open.Count)];
                    open.Remove(pick);
                    streams[pick] = streams[pick] with { To = id };
                    for (int c = 0; c < 3; c++)
                    {
                        mixed[c] += componentFlows[pick][c];
                    }
                }
                else
                {
                    var feed = new double[3];
                    double total = 20 + (180 * random.NextDouble());
                    double[] share = RandomComposition(random);
                    for (int c = 0; c < 3; c++)
                    {
                        feed[c] = total * share[c];
                        mixed[c] += feed[c];
                    }

                    streams.Add(new NetworkStream($"F{streams.Count + 1}", null, id));
                    componentFlows.Add(feed);
                }
            }

            int outlets = random.Next(1, 4);
            var shares = new double[outlets, 3];
            for (int c = 0; c < 3; c++)
            {
                double sum = 0;
                for (int o = 0; o < outlets; o++)
                {
                    shares[o, c] = 0.05 + random.NextDouble();
                    sum += shares[o, c];
                }

                for (int o = 0; o < outlets; o++)
                {
                    shares[o, c] /= sum;
                }
            }

            for (int o = 0; o < outlets; o++)
            {
                var flow = new double[3];
                for (int c = 0; c < 3; c++)
                {
                    flow[c] = mixed[c] * shares[o, c];
                }

                open.Add(streams.Count);
                streams.Add(new NetworkStream($"S{streams.Count + 1}", id, null));
                componentFlows.Add(flow);
            }
        }

        var network = new ProcessNetwork(Enumerable.Range(1, nodes).Select(n => $"N{n}"), streams, components);
        var state = new double[network.QuantityCount];
        for (int s = 0; s < streams.Count; s++)
        {
            double total = componentFlows[s].Sum();
            state[s * 4] = total;
            for (int c = 0; c < 3; c++)
            {
                state[(s * 4) + 1 + c] = componentFlows[s][c] / total;
            }
        }

        return (network, state);
    }

    /// <summary>Measurements of a random share of the quantities, with noise of the given scale (0 for exact readings).</summary>
    public static List<Measurement> Measure(ProcessNetwork network, double[] state, Random random, double share, double noiseScale)
    {
        var list = new List<Measurement>();
        for (int v = 0; v < network.QuantityCount; v++)
        {
            if (random.NextDouble() >= share)
            {
                continue;
            }

            QuantityKey key = network.KeyAt(v);
            bool flow = key.Quantity == MeasuredQuantity.Flow;
            double sigma = flow ? 0.01 * state[v] : 0.002;
            double value = state[v] + (noiseScale * sigma * TestNetworks.Gaussian(random));
            list.Add(new Measurement(key, flow ? value : Math.Clamp(value, 0, 1), sigma));
        }

        return list;
    }

    private static double[] RandomComposition(Random random)
    {
        double[] x = [0.02 + random.NextDouble(), 0.02 + random.NextDouble(), 0.02 + random.NextDouble()];
        double sum = x.Sum();
        return [.. x.Select(v => v / sum)];
    }
}
