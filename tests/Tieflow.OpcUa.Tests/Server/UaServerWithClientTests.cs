using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Server;

/// <summary>
/// Our client against our server, both in process over loopback: the monitor's path (subscribe, receive changes)
/// and the server restarted on the same port (all sessions lost: the client must create a new session and get its
/// data back, reporting the gap).
/// </summary>
public sealed class UaServerWithClientTests
{
    private static readonly TimeSpan Timeout = TimeSpan.FromSeconds(10);

    [Fact]
    public async Task Subscribe_ValuesUpdatedInTheServer_ArriveWithStatusAndSourceTime()
    {
        await using var server = await StartAsync(0);
        var flow = new NodeId("Plant.Flow", UaServer.NamespaceIndex);
        await using var client = await ConnectAsync(server.Port);
        await using var subscription = await client.SubscribeAsync(Fast, [new MonitoredNode { Node = new ExpandedNodeId(new NodeId("Plant.Flow", 0), "urn:tieflow:plant"), Key = "flow", QueueSize = 5 }]);
        await NextAsync<UaDataChange>(subscription);
        var measured = new DateTime(2026, 3, 2, 8, 0, 0, 125, DateTimeKind.Utc);

        server.UpdateValue(flow, new Variant(BuiltInType.Double, 7.25), StatusCodes.UncertainSensorNotAccurate, measured);
        var change = await NextAsync<UaDataChange>(subscription);

        Assert.Equal("flow", change.Key);
        Assert.True(change.Value.TryGetDouble(out var v) && Math.Abs(v - 7.25) < 1e-12);
        Assert.Equal(StatusCodes.UncertainSensorNotAccurate, change.Status);
        Assert.Equal(measured, change.SourceTime);
    }

    [Fact]
    public async Task Subscribe_ServerRestartedOnSamePort_ClientRecreatesAndReportsTheGap()
    {
        var first = await StartAsync(0);
        var port = first.Port;
        await using var client = await ConnectAsync(port);
        await using var subscription = await client.SubscribeAsync(Fast, [new MonitoredNode { Node = new NodeId("Plant.Flow", UaServer.NamespaceIndex), Key = "flow" }]);
        await NextAsync<UaDataChange>(subscription);

        await first.DisposeAsync();
        await using var second = await StartAsync(port);
        second.UpdateValue(new NodeId("Plant.Flow", UaServer.NamespaceIndex), new Variant(BuiltInType.Double, 99.0), StatusCodes.Good, DateTime.UnixEpoch);

        var gap = await NextAsync<UaDataGap>(subscription);
        var change = await NextAsync<UaDataChange>(subscription);

        Assert.True(gap.To >= gap.From);
        Assert.True(change.Value.TryGetDouble(out var v) && Math.Abs(v - 99.0) < 1e-12);
        Assert.Equal(1, second.SessionCount);
    }

    private static SubscriptionSettings Fast => new() { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 5, LifetimeCount = 100 };

    private static async Task<UaServer> StartAsync(int port)
    {
        var server = new UaServer(new UaServerOptions { Port = port });
        server.AddVariable(server.AddFolder(UaServer.ObjectsFolder, "Plant"), "Flow", new Variant(BuiltInType.Double, 1.0));
        await server.StartAsync();
        return server;
    }

    private static async Task<UaClient> ConnectAsync(int port)
    {
        var client = new UaClient(new UaClientOptions
        {
            EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{port}"),
            ReconnectMinDelay = TimeSpan.FromMilliseconds(100),
            ReconnectMaxDelay = TimeSpan.FromMilliseconds(500),
            KeepAliveMargin = TimeSpan.FromSeconds(1),
        });
        await client.ConnectAsync();
        return client;
    }

    private static async Task<T> NextAsync<T>(UaSubscription subscription)
        where T : UaSubscriptionEvent
    {
        using var cts = new CancellationTokenSource(Timeout);
        while (true)
        {
            if (await subscription.Events.ReadAsync(cts.Token) is T e)
            {
                return e;
            }
        }
    }
}
