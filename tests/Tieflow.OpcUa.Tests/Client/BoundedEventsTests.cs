using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;
using SubscriptionSettings = Tieflow.OpcUa.Client.SubscriptionSettings;

namespace Tieflow.OpcUa.Tests.Client;

/// <summary>A subscription's event queue is bounded: a reader that falls behind loses the oldest events and is told so by a gap.</summary>
public sealed class BoundedEventsTests
{
    [Fact]
    public async Task SlowReader_OldestEventsDropped_AndReportedAsAGapWithTheCount()
    {
        await using var server = new UaServer(new UaServerOptions { ResourcePath = "/sim" });
        var folder = server.AddFolder(UaServer.ObjectsFolder, "Plant");
        var nodes = Enumerable.Range(0, 40).Select(i => server.AddVariable(folder, $"V{i:00}", Variant.From((double)i))).ToArray();
        await server.StartAsync();
        await using var client = new UaClient(new UaClientOptions { EndpointUrl = new Uri(server.EndpointUrl) });
        await client.ConnectAsync();

        // 40 initial values into a queue of 8, nobody reading.
        await using var subscription = await client.SubscribeAsync(
            new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100), EventQueueCapacity = 8 },
            nodes.Select((n, i) => new MonitoredNode { Node = n, Key = $"V{i:00}" }));
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        // 40 values and one gap through 8 places: at least 33 data changes lost.
        while (subscription.DroppedEvents < 33)
        {
            await Task.Delay(20, cts.Token);
        }

        var events = new List<UaSubscriptionEvent>();
        while (subscription.Events.TryRead(out var e))
        {
            events.Add(e);
        }

        Assert.True(events.Count <= 8);
        var gaps = events.OfType<UaDataGap>().ToList();
        Assert.NotEmpty(gaps);
        Assert.All(gaps, g => Assert.Contains("fell behind", g.Reason, StringComparison.Ordinal));
        Assert.All(gaps, g => Assert.True(g.NotificationsMayBeMissing && g.DroppedEvents > 0));
        Assert.True(gaps.Sum(g => g.DroppedEvents) >= 32, $"gaps count {gaps.Sum(g => g.DroppedEvents)}");
        // The newest survive: the last variable's initial value is still there.
        Assert.Contains(events.OfType<UaDataChange>(), c => c.Key == "V39");
    }
}
