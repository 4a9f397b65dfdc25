using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>
/// Our client against node-opcua's server (plant-peer.mjs, an independent implementation) over loopback: browse with
/// continuation points, translate, read, subscriptions with deadbands and their per-item errors, status codes and
/// source timestamps arriving unchanged, and multi-chunk responses with an 8192-byte buffer.
/// </summary>
[Collection(NodePeerCollection.Name)]
[Trait("Category", "Interop")]
public sealed class OurClientAgainstNodeServerTests(PlantPeerFixture fixture) : IClassFixture<PlantPeerFixture>
{
    private const string Ns = "urn:example:plant-sim";
    private static readonly TimeSpan EventTimeout = TimeSpan.FromSeconds(10);

    [Fact]
    public async Task Connect_ResolvesThePeersNamespaceByUri()
    {
        await using var client = await ConnectAsync();

        Assert.Equal(UaConnectionState.Connected, client.State);
        Assert.Equal("http://opcfoundation.org/UA/", client.NamespaceUris[0]);
        Assert.Contains(Ns, client.NamespaceUris);
        Assert.Equal(new NodeId("Plant.Unit1.Flow", (ushort)client.NamespaceUris.ToList().IndexOf(Ns)), client.Resolve(Node("Plant.Unit1.Flow")));
    }

    [Fact]
    public async Task Browse_300TagsWithMaxReferences_FollowsContinuationPoints()
    {
        await using var client = await ConnectAsync();

        var references = await client.BrowseAsync(client.Resolve(Node("Plant.Tags")), maxReferencesPerCall: 40);

        Assert.Equal(300, references.Count);
        Assert.Equal(Enumerable.Range(0, 300).Select(i => $"Tag{i:000}"), references.Select(r => r.BrowseName.Name));
    }

    [Fact]
    public async Task Translate_BrowsePath_ResolvesTheFlowNode()
    {
        await using var client = await ConnectAsync();

        var results = await client.TranslateAsync(["/Objects/2:Plant/2:Unit1/2:Flow", "/Objects/2:Plant/2:NoSuchThing"]);

        Assert.Equal(StatusCodes.Good, results[0].Status);
        Assert.Equal(client.Resolve(Node("Plant.Unit1.Flow")), client.Resolve(Assert.Single(results[0].Targets)));
        Assert.True(results[1].Status.Is(StatusCodes.BadNoMatch), $"expected BadNoMatch, got {results[1].Status}");
    }

    [Fact]
    public async Task Read_300NodesWith8192ByteBuffer_ReassemblesTheChunkedResponse()
    {
        // With an 8192-byte receive buffer node-opcua answers a 300-node Read in several chunks (docs/opcua.md §1.3).
        await using var client = await ConnectAsync(new TransportLimits { ReceiveBufferSize = 8192, SendBufferSize = 8192 });
        var nodes = Enumerable.Range(0, 300).Select(i => client.Resolve(Node($"Plant.Tags.Tag{i:000}"))).ToList();

        var values = await client.ReadAsync(nodes);

        Assert.Equal(300, values.Count);
        Assert.All(values, v => Assert.True(v.Status.IsGood, v.Status.ToString()));
        for (var i = 0; i < 300; i++)
        {
            Assert.True(values[i].Value.TryGetDouble(out var d) && d >= i, $"Tag{i:000} = {values[i].Value}");
        }
    }

    [Fact]
    public async Task Read_InjectedStatusesAndSourceTimes_ArriveUnchanged()
    {
        await using var client = await ConnectAsync();
        var node = client.Resolve(Node("Plant.Unit1.Constant"));
        (string Status, uint Code, string Time)[] cases =
        [
            ("UncertainLastUsableValue", 0x40900000u, "2030-01-01T00:00:00.000Z"),
            ("BadSensorFailure", 0x808C0000u, "2031-06-15T12:34:56.789Z"),
            ("Good", 0u, "2026-01-01T00:00:00.000Z"),
        ];

        foreach (var (status, code, time) in cases)
        {
            Assert.StartsWith("OK", await fixture.Peer.CommandAsync($"set Constant 42 {status} {time}"), StringComparison.Ordinal);

            var value = Assert.Single(await client.ReadAsync([node]));

            Assert.Equal(code, value.Status.Code);
            Assert.Equal(DateTime.Parse(time, null, System.Globalization.DateTimeStyles.AdjustToUniversal), value.SourceTimestamp);
            Assert.True(value.Value.TryGetDouble(out var d) && Math.Abs(d - 42) < 1e-12);
        }
    }

    [Fact]
    public async Task Subscribe_InjectedStatusesAndSourceTimes_ArriveUnchanged()
    {
        await using var client = await ConnectAsync();
        await using var subscription = await client.SubscribeAsync(Fast, [new MonitoredNode { Node = Node("Plant.Tags.Tag299"), Key = "t", QueueSize = 10 }]);
        Assert.StartsWith("OK", await fixture.Peer.CommandAsync("pause"), StringComparison.Ordinal);
        try
        {
            await NextChangeAsync(subscription, _ => true);
            Assert.StartsWith("OK", await fixture.Peer.CommandAsync("set Tag299 12.5 BadSensorFailure 2030-01-01T00:00:00Z"), StringComparison.Ordinal);
            var bad = await NextChangeAsync(subscription, c => c.Status.IsBad);
            Assert.StartsWith("OK", await fixture.Peer.CommandAsync("set Tag299 13.5 UncertainLastUsableValue 2030-01-01T00:00:01.250Z"), StringComparison.Ordinal);
            var uncertain = await NextChangeAsync(subscription, c => c.Status.IsUncertain);

            Assert.Equal(0x808C0000u, bad.Status.Code);
            Assert.Equal(new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc), bad.SourceTime);
            Assert.True(bad.Value.TryGetDouble(out var b) && Math.Abs(b - 12.5) < 1e-12);
            Assert.Equal(0x40900000u, uncertain.Status.Code);
            Assert.Equal(new DateTime(2030, 1, 1, 0, 0, 1, 250, DateTimeKind.Utc), uncertain.SourceTime);
        }
        finally
        {
            await fixture.Peer.CommandAsync("resume");
        }
    }

    [Fact]
    public async Task Subscribe_AbsoluteDeadband_ReportsOnlyChangesBeyondIt()
    {
        await using var client = await ConnectAsync();
        await using var subscription = await client.SubscribeAsync(Fast,
            [new MonitoredNode { Node = Node("Plant.Unit1.Ramp"), Key = "ramp", QueueSize = 10, DeadbandType = DeadbandType.Absolute, DeadbandValue = 0.25 }]);

        var values = new List<double>();
        while (values.Count < 5)
        {
            var change = await NextChangeAsync(subscription, _ => true);
            Assert.True(change.Value.TryGetDouble(out var v));
            values.Add(v);
        }

        // The ramp rises 0.1 per tick: with a 0.25 deadband every third value is reported (docs/opcua.md §1.10).
        for (var i = 1; i < values.Count; i++)
        {
            Assert.Equal(0.3, values[i] - values[i - 1], 1e-9);
        }
    }

    [Fact]
    public async Task Subscribe_Deadbands_GivePerItemErrorsForUnsuitableNodes()
    {
        await using var client = await ConnectAsync();

        await using var subscription = await client.SubscribeAsync(Fast,
        [
            new MonitoredNode { Node = Node("Plant.Unit1.Level"), Key = "level", DeadbandType = DeadbandType.Percent, DeadbandValue = 10 },
            new MonitoredNode { Node = Node("Plant.Unit1.Flow"), Key = "flow-pct", DeadbandType = DeadbandType.Percent, DeadbandValue = 10 },
            new MonitoredNode { Node = Node("Plant.Unit1.Level"), Key = "level-150", DeadbandType = DeadbandType.Percent, DeadbandValue = 150 },
            new MonitoredNode { Node = Node("Plant.Unit1.Level-EURange"), Key = "range-abs", DeadbandType = DeadbandType.Absolute, DeadbandValue = 1 },
        ]);

        var items = subscription.Items.ToDictionary(i => i.Key);
        Assert.Equal(StatusCodes.Good, items["level"].Status);
        // Error codes node-opcua gives (docs/opcua.md §1.10, verified there).
        Assert.Equal(0x80440000u, items["flow-pct"].Status.CodeWithoutFlags);
        Assert.Equal(0x808E0000u, items["level-150"].Status.CodeWithoutFlags);
        Assert.Equal(0x80450000u, items["range-abs"].Status.CodeWithoutFlags);
        var level = await NextChangeAsync(subscription, c => c.Key == "level");
        Assert.True(level.Status.IsGood);
    }

    private static SubscriptionSettings Fast => new() { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 10, LifetimeCount = 100 };

    private static ExpandedNodeId Node(string id) => new(new NodeId(id, 0), Ns);

    private async Task<UaClient> ConnectAsync(TransportLimits? limits = null)
    {
        var client = new UaClient(new UaClientOptions
        {
            EndpointUrl = new Uri(fixture.Peer.EndpointUrl),
            Transport = limits ?? TransportLimits.Default,
        });
        await client.ConnectAsync();
        return client;
    }

    internal static async Task<UaDataChange> NextChangeAsync(UaSubscription subscription, Func<UaDataChange, bool> match)
    {
        using var cts = new CancellationTokenSource(EventTimeout);
        while (true)
        {
            var e = await subscription.Events.ReadAsync(cts.Token);
            if (e is UaDataChange change && match(change))
            {
                return change;
            }
        }
    }
}
