using System.Diagnostics;
using System.Globalization;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;
using SubscriptionSettings = Tieflow.OpcUa.Client.SubscriptionSettings;

namespace Tieflow.Bench.OpcUa;

/// <summary>
/// Latency from a value change in our server to the client's notification over loopback, with 500 monitored items
/// sampled every second and a 1 s publishing interval (target: 99th percentile under 50 ms beyond the publishing
/// interval). Not a BenchmarkDotNet benchmark: a percentile of asynchronous arrivals is measured by a probe.
/// Run: <c>dotnet run -c Release --project tests/Tieflow.Bench -- latency [rounds]</c>.
/// </summary>
public static class NotificationLatencyProbe
{
    public static async Task RunAsync(int rounds)
    {
        const int Items = 500;
        var interval = TimeSpan.FromSeconds(1);
        await using var server = new UaServer(new UaServerOptions { ResourcePath = "/bench" });
        var folder = server.AddFolder(UaServer.ObjectsFolder, "Bench");
        var nodes = Enumerable.Range(0, Items).Select(i => server.AddVariable(folder, $"V{i:000}", Variant.From(0.0))).ToArray();
        await server.StartAsync();

        await using var client = new UaClient(new UaClientOptions { EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{server.Port}/bench") });
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = interval, MaxKeepAliveCount = 10 },
            nodes.Select((n, i) => new MonitoredNode { Node = n, Key = i.ToString(CultureInfo.InvariantCulture), SamplingInterval = interval }));

        var changedAt = new long[rounds + 1];
        var latencies = new List<double>();
        var reader = Task.Run(async () =>
        {
            await foreach (var e in subscription.Events.ReadAllAsync())
            {
                if (e is UaDataChange { Value.Value: double v } && v >= 1)
                {
                    var round = (int)(v / Items);
                    latencies.Add(Stopwatch.GetElapsedTime(changedAt[round]).TotalMilliseconds);
                    if (latencies.Count == rounds * Items)
                    {
                        return;
                    }
                }
            }
        });

        await Task.Delay(interval * 2);
        for (var round = 1; round <= rounds; round++)
        {
            changedAt[round] = Stopwatch.GetTimestamp();
            var now = DateTime.UtcNow;
            for (var i = 0; i < Items; i++)
            {
                server.UpdateValue(nodes[i], Variant.From((double)((round * Items) + i)), StatusCodes.Good, now);
            }

            await Task.Delay(interval + TimeSpan.FromMilliseconds(137 * round % 400));
        }

        await reader.WaitAsync(TimeSpan.FromSeconds(10));
        latencies.Sort();
        double P(double q) => latencies[(int)Math.Min(latencies.Count - 1, Math.Ceiling(q * latencies.Count) - 1)];
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"notifications {latencies.Count}; latency ms: p50 {P(0.5):F1}, p99 {P(0.99):F1}, max {latencies[^1]:F1}; p99 beyond the {interval.TotalMilliseconds} ms publishing interval: {P(0.99) - interval.TotalMilliseconds:F1} ms"));
    }
}
