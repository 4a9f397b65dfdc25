using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;
using Tieflow.OpcUa.Tests.Fakes;
using SubscriptionSettings = Tieflow.OpcUa.Client.SubscriptionSettings;

namespace Tieflow.OpcUa.Tests.Client;

/// <summary>Our client end to end against our in-process server (the node-opcua peer is in the Interop tests).</summary>
public sealed class UaClientTests : IAsyncLifetime
{
    private static readonly TimeSpan Wait = TimeSpan.FromSeconds(10);
    private UaServer _server = null!;
    private NodeId _flow;
    private NodeId _tags;
    private NodeId _level;

    private static UaServer NewServer(int port) =>
        new(new UaServerOptions { Port = port, ResourcePath = "/sim", NamespaceUri = "urn:test:plant", Users = new Dictionary<string, string> { ["operator"] = "s3cret-Pw" } });

    private void Populate()
    {
        var plant = _server.AddFolder(UaServer.ObjectsFolder, "Plant");
        var unit = _server.AddObject(plant, "Unit1");
        _flow = _server.AddVariable(unit, "Flow", Variant.From(1.0));
        _level = _server.AddVariable(unit, "Level", Variant.From(50.0), new UaVariableOptions { EngineeringUnitsRange = (0, 200) });
        _tags = _server.AddFolder(plant, "Tags");
        for (var i = 0; i < 120; i++)
        {
            _server.AddVariable(_tags, $"Tag{i:000}", Variant.From((double)i));
        }
    }

    public async Task InitializeAsync()
    {
        _server = NewServer(0);
        Populate();
        await _server.StartAsync();
    }

    public async Task DisposeAsync() => await _server.DisposeAsync();

    private UaClientOptions Options(UaUserIdentity? identity = null) => new()
    {
        EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{_server.Port}/sim"),
        Identity = identity ?? UaUserIdentity.Anonymous,
        RequestTimeout = TimeSpan.FromSeconds(5),
        ReconnectMinDelay = TimeSpan.FromMilliseconds(100),
        ReconnectMaxDelay = TimeSpan.FromMilliseconds(500),
        KeepAliveMargin = TimeSpan.FromMilliseconds(500),
    };

    [Fact]
    public async Task ConnectAsync_OurServer_ReadsNamespacesBrowsesWithContinuationTranslatesAndReads()
    {
        await using var client = new UaClient(Options());
        await client.ConnectAsync();
        Assert.Equal(UaConnectionState.Connected, client.State);
        Assert.Contains("urn:test:plant", client.NamespaceUris);

        var tags = await client.BrowseAsync(_tags, maxReferencesPerCall: 25);
        Assert.Equal(120, tags.Count(r => r.NodeClass == NodeClass.Variable));

        var paths = await client.TranslateAsync(["/Objects/2:Plant/2:Unit1/2:Flow", "/Objects/2:Plant/2:Nothing"]);
        Assert.Equal(_flow, paths[0].Targets.Single().NodeId);
        Assert.True(paths[1].Status.IsBad);

        var values = await client.ReadAsync([_flow, NodeId.Parse("ns=2;s=Nope")]);
        Assert.Equal(1.0, (double)values[0].Value.Value!, 12);
        Assert.Equal(StatusCodes.BadNodeIdUnknown, values[1].Status);
    }

    [Fact]
    public async Task SubscribeAsync_ValueChanges_ArriveWithStatusAndSourceTimeUnchanged()
    {
        await using var client = new UaClient(Options());
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 5 },
            [new MonitoredNode { Node = ExpandedNodeId.Parse("nsu=urn:test:plant;s=Plant.Unit1.Flow"), Key = "flow", SamplingInterval = TimeSpan.FromMilliseconds(50) }]);
        Assert.Equal(StatusCodes.Good, subscription.Items.Single().Status);

        var first = await NextDataAsync(subscription);
        Assert.Equal(1.0, (double)first.Value.Value!, 12);

        var sourceTime = new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        _server.UpdateValue(_flow, Variant.From(12.5), StatusCodes.BadSensorFailure, sourceTime);
        var change = await NextDataAsync(subscription);
        Assert.Equal("flow", change.Key);
        Assert.Equal(12.5, (double)change.Value.Value!, 12);
        Assert.Equal(StatusCodes.BadSensorFailure, change.Status);
        Assert.Equal(sourceTime, change.SourceTime);
    }

    [Fact]
    public async Task SubscribeAsync_Deadbands_PerItemResultsThenModifyAndRemove()
    {
        await using var client = new UaClient(Options());
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100) },
        [
            new MonitoredNode { Node = _level, Key = "level-pct", DeadbandType = DeadbandType.Percent, DeadbandValue = 10 },
            new MonitoredNode { Node = _flow, Key = "flow-pct", DeadbandType = DeadbandType.Percent, DeadbandValue = 10 },
            new MonitoredNode { Node = _flow, Key = "flow-abs", DeadbandType = DeadbandType.Absolute, DeadbandValue = 0.5 },
            new MonitoredNode { Node = NodeId.Parse("ns=2;s=Nope"), Key = "nope" },
        ]);
        var items = subscription.Items.ToDictionary(i => i.Key);
        Assert.True(items["level-pct"].Status.IsGood);
        Assert.Equal(StatusCodes.BadMonitoredItemFilterUnsupported, items["flow-pct"].Status); // no EURange (docs/opcua.md §1.10)
        Assert.True(items["flow-abs"].Status.IsGood);
        Assert.Equal(StatusCodes.BadNodeIdUnknown, items["nope"].Status);

        // Absolute deadband 0.5 (docs/opcua.md §1.10): 1.0 → 1.3 is not reported, 1.0 → 1.6 is.
        await NextDataAsync(subscription);
        var t = new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc);
        _server.UpdateValue(_flow, Variant.From(1.3), StatusCodes.Good, t);
        await Task.Delay(300);
        _server.UpdateValue(_flow, Variant.From(1.6), StatusCodes.Good, t.AddSeconds(1));
        UaDataChange change;
        do
        {
            change = await NextDataAsync(subscription);
            Assert.False(change.Key == "flow-abs" && Math.Abs((double)change.Value.Value! - 1.3) < 1e-12, "a change within the deadband was reported");
        }
        while (change.Key != "flow-abs" || Math.Abs((double)change.Value.Value! - 1.6) > 1e-12);

        await subscription.ModifyAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(200), MaxKeepAliveCount = 4 });
        Assert.Equal(TimeSpan.FromMilliseconds(200), subscription.PublishingInterval);
        Assert.Equal(4u, subscription.KeepAliveCount);
        await subscription.RemoveNodesAsync(["flow-abs", "nope"]);
        Assert.Equal(["level-pct", "flow-pct"], subscription.Items.Select(i => i.Key));
    }

    [Fact]
    public async Task ConnectAsync_PlainUserNameOnNoneChannel_Accepted()
    {
        await using var client = new UaClient(Options(UaUserIdentity.FromUserName("operator", "s3cret-Pw")));
        await client.ConnectAsync();
        Assert.Equal(UaConnectionState.Connected, client.State);
    }

    [Fact]
    public async Task ConnectAsync_WrongPassword_BadUserAccessDeniedWithoutThePassword()
    {
        await using var client = new UaClient(Options(UaUserIdentity.FromUserName("operator", "wrong-Secret-42")));
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => client.ConnectAsync());
        Assert.Equal(StatusCodes.BadUserAccessDenied, ex.Status);
        Assert.DoesNotContain("wrong-Secret-42", ex.ToString(), StringComparison.Ordinal);
        Assert.Contains("operator", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Reconnect_ServerRestartedOnSamePort_NewSessionGapReportedNotificationsResume()
    {
        var states = new List<UaConnectionState>();
        await using var client = new UaClient(Options());
        client.StateChanged += (_, e) =>
        {
            lock (states)
            {
                states.Add(e.State);
            }
        };
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 5 },
            [new MonitoredNode { Node = _flow, Key = "flow" }]);
        await NextDataAsync(subscription);

        var port = _server.Port;
        await _server.StopAsync();
        await _server.DisposeAsync();
        _server = NewServer(port);
        Populate();
        await _server.StartAsync();
        var back = DateTime.UtcNow;

        var gap = await NextAsync<UaDataGap>(subscription);
        Assert.True(gap.To >= gap.From);
        await AwaitResumedAsync(subscription, 7.0);

        Assert.True(DateTime.UtcNow - back < Wait, "notifications resumed within 10 s of the server being back");
        Assert.Equal(1, client.ReconnectCount);
        lock (states)
        {
            Assert.Contains(UaConnectionState.Reconnecting, states);
            Assert.Equal(UaConnectionState.Connected, states[^1]);
        }
    }

    [Fact]
    public async Task Reconnect_LinkCut_SessionReactivatedSameSubscription()
    {
        await using var proxy = new TcpProxy(_server.Port);
        var reasons = new List<string>();
        await using var client = new UaClient(Options() with { EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{proxy.Port}/sim") });
        client.StateChanged += (_, e) =>
        {
            lock (reasons)
            {
                reasons.Add(e.Message);
            }
        };
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 5 },
            [new MonitoredNode { Node = _flow, Key = "flow" }]);
        await NextDataAsync(subscription);
        var id = subscription.SubscriptionId;

        proxy.Cut();
        await WaitForReconnectAsync(client);
        await AwaitResumedAsync(subscription, 8.0);

        Assert.Equal(id, subscription.SubscriptionId);
        lock (reasons)
        {
            Assert.Contains(reasons, r => r.Contains("session was reactivated", StringComparison.Ordinal));
        }
    }

    [Fact]
    public async Task Reconnect_ChangeWhileLinkDown_DeliveredAfterReactivationWithCompleteGap()
    {
        // The session survives on the server: what it published meanwhile comes through (kept for the new Publish
        // requests, or republished from its retransmission queue), so nothing is lost (docs/opcua.md §1.13 step 5); the
        // interval is still reported, marked complete, so that a store knows the plant was not observed live.
        await using var proxy = new TcpProxy(_server.Port);
        await using var client = new UaClient(Options() with { EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{proxy.Port}/sim") });
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 5 },
            [new MonitoredNode { Node = _flow, Key = "flow" }]);
        await NextDataAsync(subscription);

        proxy.Cut();
        _server.UpdateValue(_flow, Variant.From(5.0), StatusCodes.Good, new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc));
        await WaitForReconnectAsync(client);
        using var cts = new CancellationTokenSource(Wait);
        var gaps = new List<UaDataGap>();
        while (true)
        {
            var e = await subscription.Events.ReadAsync(cts.Token);
            if (e is UaDataGap gap)
            {
                gaps.Add(gap);
            }

            if (e is UaDataChange { Value.Value: double v } && Math.Abs(v - 5.0) < 1e-12)
            {
                break;
            }
        }

        UaDataGap only = Assert.Single(gaps);
        Assert.False(only.NotificationsMayBeMissing);
        Assert.True(only.To >= only.From);
    }

    [Fact]
    public async Task Watchdog_LinkFrozen_NoticedAndRecoveredOverNewConnection()
    {
        await using var proxy = new TcpProxy(_server.Port);
        var reasons = new List<(UaConnectionState State, StatusCode Reason)>();
        await using var client = new UaClient(Options() with { EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{proxy.Port}/sim") });
        client.StateChanged += (_, e) =>
        {
            lock (reasons)
            {
                reasons.Add((e.State, e.Reason));
            }
        };
        await client.ConnectAsync();
        await using var subscription = await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = TimeSpan.FromMilliseconds(100), MaxKeepAliveCount = 3 },
            [new MonitoredNode { Node = _flow, Key = "flow" }]);
        await NextDataAsync(subscription);

        // The socket stays open but nothing flows: only the keep-alive watchdog can notice.
        proxy.Freeze();
        await WaitForReconnectAsync(client);
        lock (reasons)
        {
            Assert.Contains((UaConnectionState.Reconnecting, StatusCodes.BadTimeout), reasons);
        }

        await AwaitResumedAsync(subscription, 9.0);
    }

    /// <summary>
    /// Changes the value every 200 ms until a change at or above <paramref name="from"/> arrives: one message may be
    /// lost with the old connection (then reported as a gap), but notifications must resume.
    /// </summary>
    private async Task AwaitResumedAsync(UaSubscription subscription, double from)
    {
        using var cts = new CancellationTokenSource(Wait);
        var k = 0;
        var changer = Task.Run(async () =>
        {
            while (!cts.IsCancellationRequested)
            {
                _server.UpdateValue(_flow, Variant.From(from + k++), StatusCodes.Good, new DateTime(2030, 1, 1, 0, 0, 0, DateTimeKind.Utc).AddSeconds(k));
                await Task.Delay(200);
            }
        });
        try
        {
            while (true)
            {
                if (await subscription.Events.ReadAsync(cts.Token) is UaDataChange { Value.Value: double v } && v >= from - 1e-12)
                {
                    return;
                }
            }
        }
        finally
        {
            await cts.CancelAsync();
            await changer;
        }
    }

    private static async Task WaitForReconnectAsync(UaClient client)
    {
        for (var i = 0; i < 1000 && client.ReconnectCount == 0; i++)
        {
            await Task.Delay(10);
        }

        Assert.Equal(1, client.ReconnectCount);
    }

    private static async Task<UaDataChange> NextDataAsync(UaSubscription subscription) => await NextAsync<UaDataChange>(subscription);

    private static async Task<T> NextAsync<T>(UaSubscription subscription)
        where T : UaSubscriptionEvent
    {
        using var cts = new CancellationTokenSource(Wait);
        while (true)
        {
            var e = await subscription.Events.ReadAsync(cts.Token);
            if (e is T t)
            {
                return t;
            }
        }
    }
}
