using System.Collections.Concurrent;
using System.Diagnostics;
using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Engines;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.Bench.OpcUa;

/// <summary>
/// From a value change in our server to our client's notification over loopback, with 500 monitored items sampled
/// and published every second (target: 99th percentile under 50 ms beyond the publishing interval). Each operation
/// waits a random phase of the publishing cycle, changes all 500 values and waits for the 500 notifications; the
/// latencies of every notification are collected and their percentiles printed at the end (look for "latency" in
/// the log). The reported mean time per operation is not the figure of interest.
/// </summary>
[SimpleJob(RunStrategy.Monitoring, launchCount: 1, warmupCount: 2, iterationCount: 20, invocationCount: 1)]
public class ServerToClientLatencyBenchmarks
{
    private const int Items = 500;
    private static readonly TimeSpan Interval = TimeSpan.FromSeconds(1);

    private readonly ConcurrentDictionary<string, long> _changedAt = new();
    private readonly ConcurrentBag<double> _latenciesMs = [];
    private readonly Random _random = new(42);
    private UaServer _server = null!;
    private UaClient _client = null!;
    private UaSubscription _subscription = null!;
    private NodeId[] _nodes = [];
    private Task _reader = Task.CompletedTask;
    private CountdownEvent _arrived = new(Items);
    private double _value;
    private bool _measuring;

    [GlobalSetup]
    public void Setup()
    {
        _server = new UaServer(new UaServerOptions());
        var folder = _server.AddFolder(UaServer.ObjectsFolder, "Bench");
        _nodes = [.. Enumerable.Range(0, Items).Select(i => _server.AddVariable(folder, $"V{i:000}", new Variant(BuiltInType.Double, 0.0)))];
        _server.StartAsync().GetAwaiter().GetResult();
        _client = new UaClient(new UaClientOptions { EndpointUrl = new Uri(_server.EndpointUrl) });
        _client.ConnectAsync().GetAwaiter().GetResult();
        _subscription = _client.SubscribeAsync(
            new SubscriptionSettings { PublishingInterval = Interval, MaxKeepAliveCount = 5, LifetimeCount = 60 },
            _nodes.Select(n => new MonitoredNode { Node = n, Key = n.ToString(), SamplingInterval = Interval, QueueSize = 2 })).GetAwaiter().GetResult();
        _reader = Task.Run(ReadAsync);
        // Let the initial values arrive before measuring.
        Thread.Sleep(2500);
        _measuring = true;
    }

    [Benchmark]
    public void ChangeAllAndWait()
    {
        // A random phase of the publishing cycle, and at least one sampling interval since the last change.
        Thread.Sleep(Interval + TimeSpan.FromMilliseconds(_random.Next(0, 1000)));
        _arrived = new CountdownEvent(Items);
        _value += 1;
        var now = TimeProvider.System.GetUtcNow().UtcDateTime;
        foreach (var node in _nodes)
        {
            _changedAt[node.ToString()] = Stopwatch.GetTimestamp();
            _server.UpdateValue(node, new Variant(BuiltInType.Double, _value), StatusCodes.Good, now);
        }
        if (!_arrived.Wait(TimeSpan.FromSeconds(10)))
        {
            throw new InvalidOperationException($"only {Items - _arrived.CurrentCount} of {Items} notifications arrived within 10 s");
        }
    }

    [GlobalCleanup]
    public void Cleanup()
    {
        var sorted = _latenciesMs.OrderBy(x => x).ToArray();
        if (sorted.Length > 0)
        {
            double P(double q) => sorted[Math.Min(sorted.Length - 1, (int)Math.Ceiling(q * sorted.Length) - 1)];
            var interval = Interval.TotalMilliseconds;
            Console.WriteLine(
                $"// latency over {sorted.Length} notifications: p50 {P(0.50):F1} ms, p99 {P(0.99):F1} ms, max {sorted[^1]:F1} ms; " +
                $"p99 beyond the {interval:F0} ms publishing interval: {P(0.99) - interval:F1} ms (target < 50 ms)");
        }
        _subscription.DisposeAsync().AsTask().GetAwaiter().GetResult();
        _client.DisposeAsync().AsTask().GetAwaiter().GetResult();
        _server.DisposeAsync().AsTask().GetAwaiter().GetResult();
    }

    private async Task ReadAsync()
    {
        await foreach (var e in _subscription.Events.ReadAllAsync())
        {
            if (e is UaDataChange change && _measuring && change.Value.TryGetDouble(out var v) && Math.Abs(v - _value) < 1e-9 &&
                _changedAt.TryGetValue(change.Key, out var at))
            {
                _latenciesMs.Add(Stopwatch.GetElapsedTime(at).TotalMilliseconds);
                _arrived.Signal();
            }
        }
    }
}
