using System.Reflection;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Tests.Fakes;

namespace Tieflow.OpcUa.Tests.Client;

/// <summary>The publish loop against a scripted peer: acknowledgements, sequence gaps, Republish and the watchdog (docs/opcua.md §1.11).</summary>
public sealed class UaClientPublishTests
{
    private static readonly TimeSpan Wait = TimeSpan.FromSeconds(10);

    private static UaClientOptions Options(ScriptedSessionServer peer, UaUserIdentity? identity = null) => new()
    {
        EndpointUrl = peer.Server.Url,
        Identity = identity ?? UaUserIdentity.Anonymous,
        RequestTimeout = TimeSpan.FromSeconds(5),
        PublishRequestCount = 2,
        KeepAliveMargin = TimeSpan.FromMilliseconds(300),
        ReconnectMinDelay = TimeSpan.FromMilliseconds(100),
        ReconnectMaxDelay = TimeSpan.FromMilliseconds(200),
    };

    private static async Task<UaSubscription> SubscribeAsync(UaClient client, TimeSpan? interval = null) =>
        await client.SubscribeAsync(new SubscriptionSettings { PublishingInterval = interval ?? TimeSpan.FromSeconds(1), MaxKeepAliveCount = 3 },
            [new MonitoredNode { Node = NodeId.Parse("ns=2;s=Flow"), Key = "flow" }]);

    private static async Task<T> NextAsync<T>(UaSubscription subscription)
        where T : UaSubscriptionEvent
    {
        using var cts = new CancellationTokenSource(Wait);
        while (true)
        {
            if (await subscription.Events.ReadAsync(cts.Token) is T t)
            {
                return t;
            }
        }
    }

    [Fact]
    public async Task Publish_DataMessages_AcknowledgedInLaterRequests()
    {
        await using var peer = new ScriptedSessionServer();
        await using var client = new UaClient(Options(peer));
        await client.ConnectAsync();
        var subscription = await SubscribeAsync(client);

        await peer.AnswerPublishAsync(1, ScriptedSessionServer.DataChange(1, 5.0));
        var change = await NextAsync<UaDataChange>(subscription);
        Assert.Equal(5.0, (double)change.Value.Value!, 12);
        await peer.AnswerPublishAsync(2, ScriptedSessionServer.DataChange(1, 6.0));
        await NextAsync<UaDataChange>(subscription);
        await peer.AnswerPublishAsync(3);
        for (var i = 0; i < 300 && !(peer.Acknowledged.Contains(1u) && peer.Acknowledged.Contains(2u)); i++)
        {
            await Task.Delay(10);
        }

        Assert.Contains(1u, peer.Acknowledged);
        Assert.Contains(2u, peer.Acknowledged);
        Assert.DoesNotContain(3u, peer.Acknowledged); // a keep-alive consumes no number and is not acknowledged
    }

    [Fact]
    public async Task Publish_SequenceGapNotRepublishable_ReportsGap()
    {
        await using var peer = new ScriptedSessionServer();
        await using var client = new UaClient(Options(peer));
        await client.ConnectAsync();
        var subscription = await SubscribeAsync(client);

        await peer.AnswerPublishAsync(1, ScriptedSessionServer.DataChange(1, 1.0));
        await NextAsync<UaDataChange>(subscription);
        await peer.AnswerPublishAsync(3, ScriptedSessionServer.DataChange(1, 3.0));
        var gap = await NextAsync<UaDataGap>(subscription);
        Assert.Contains("2..2", gap.Reason, StringComparison.Ordinal);
        Assert.Contains("BadMessageNotAvailable", gap.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Publish_SequenceGapRepublished_MissingValueDelivered()
    {
        await using var peer = new ScriptedSessionServer
        {
            Republish = r => new RepublishResponse { NotificationMessage = new NotificationMessage { SequenceNumber = r.RetransmitSequenceNumber, NotificationData = [ScriptedSessionServer.DataChange(1, 2.0)] } },
        };
        await using var client = new UaClient(Options(peer));
        await client.ConnectAsync();
        var subscription = await SubscribeAsync(client);

        await peer.AnswerPublishAsync(1, ScriptedSessionServer.DataChange(1, 1.0));
        await NextAsync<UaDataChange>(subscription);

        // A keep-alive announcing 3 as the next number means message 2 was sent and lost.
        await peer.AnswerPublishAsync(3);
        var recovered = await NextAsync<UaDataChange>(subscription);
        Assert.Equal(2.0, (double)recovered.Value.Value!, 12);
        Assert.Contains(peer.Server.Received, r => r is RepublishRequest { RetransmitSequenceNumber: 2 });
    }

    [Fact]
    public async Task Watchdog_SilentServer_ClientReconnects()
    {
        await using var peer = new ScriptedSessionServer();
        await using var client = new UaClient(Options(peer));
        var reconnecting = new TaskCompletionSource<UaConnectionStateChange>();
        client.StateChanged += (_, e) =>
        {
            if (e.State == UaConnectionState.Reconnecting)
            {
                reconnecting.TrySetResult(e);
            }
        };
        await client.ConnectAsync();
        await SubscribeAsync(client, TimeSpan.FromMilliseconds(100));

        // Publish requests stay parked: no data and no keep-alive for more than 1.5 x (3 x 100 ms) + 300 ms.
        var change = await reconnecting.Task.WaitAsync(Wait);
        Assert.Equal(StatusCodes.BadTimeout, change.Reason);
        Assert.Contains("keep-alive", change.Message, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ConnectAsync_UserNamePolicyNeedsEncryption_ClearErrorWithoutPassword()
    {
        await using var peer = new ScriptedSessionServer
        {
            TokenPolicies = [new UserTokenPolicy { PolicyId = "user", TokenType = UserTokenType.UserName, SecurityPolicyUri = "http://opcfoundation.org/UA/SecurityPolicy#Basic256Sha256" }],
        };
        await using var client = new UaClient(Options(peer, UaUserIdentity.FromUserName("operator", "Very-Secret-9")));
        var ex = await Assert.ThrowsAsync<ServiceResultException>(() => client.ConnectAsync());
        Assert.Contains("encrypted user name tokens come with the security work", ex.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("Very-Secret-9", ex.ToString(), StringComparison.Ordinal);
        Assert.DoesNotContain(peer.Server.Received, r => r is ActivateSessionRequest);
    }

    [Fact]
    public async Task Reconnect_ServerRestartedWithOtherNamespaceOrder_SequenceOfSpecAndNodesReResolvedByUri()
    {
        await using var peer = new ScriptedSessionServer();
        await using var client = new UaClient(Options(peer));
        await client.ConnectAsync();
        var subscription = await SubscribeAsync(client);
        var first = peer.Server.Received.OfType<CreateMonitoredItemsRequest>().Single();
        Assert.Equal(NodeId.Parse("ns=2;s=Flow"), first.ItemsToCreate[0].ItemToMonitor.NodeId);

        peer.NamespaceArray = ["http://opcfoundation.org/UA/", "urn:test:server", "urn:test:other", "urn:test:plant"];
        peer.Restart();
        var gap = await NextAsync<UaDataGap>(subscription);
        Assert.Contains("recreated", gap.Reason, StringComparison.Ordinal);

        // OPC 10000-4 §6.7 (docs/opcua.md §1.13): reactivate, else new session + TransferSubscriptions, else recreate.
        var after = peer.Server.Received.SkipWhile(r => r != first).Skip(1).Where(r => r is not PublishRequest and not OpenSecureChannelRequest)
            .Select(r => r.GetType().Name.Replace("Request", string.Empty, StringComparison.Ordinal)).ToArray();
        Assert.Equal(["GetEndpoints", "ActivateSession", "CreateSession", "ActivateSession", "Read", "TransferSubscriptions", "CreateSubscription", "CreateMonitoredItems"], after);
        var second = peer.Server.Received.OfType<CreateMonitoredItemsRequest>().Last();
        Assert.Equal(NodeId.Parse("ns=3;s=Flow"), second.ItemsToCreate[0].ItemToMonitor.NodeId);
        Assert.Contains("urn:test:other", client.NamespaceUris);
    }

    [Fact]
    public async Task Watchdog_NoSubscriptions_ReadsServerStateToKeepTheSessionAlive()
    {
        await using var peer = new ScriptedSessionServer();
        await using var client = new UaClient(Options(peer) with { SessionTimeout = TimeSpan.FromSeconds(1.2) });
        await client.ConnectAsync();
        for (var i = 0; i < 300 && !peer.Server.Received.OfType<ReadRequest>().Any(r => r.NodesToRead[0].NodeId == WellKnownNodes.ServerStatusState); i++)
        {
            await Task.Delay(10);
        }

        Assert.Contains(peer.Server.Received.OfType<ReadRequest>(), r => r.NodesToRead[0].NodeId == WellKnownNodes.ServerStatusState);
    }

    [Fact]
    public void PublicApi_NoWriteOrCallOperation()
    {
        // Tieflow is read-only towards the plant: no public client method writes or calls.
        var names = typeof(UaClient).Assembly.GetExportedTypes().Where(t => t.Namespace == "Tieflow.OpcUa.Client")
            .SelectMany(t => t.GetMethods(BindingFlags.Public | BindingFlags.Instance | BindingFlags.Static | BindingFlags.DeclaredOnly)).Select(m => m.Name);
        Assert.DoesNotContain(names, n => n.StartsWith("Write", StringComparison.Ordinal) || n.StartsWith("Call", StringComparison.Ordinal));
    }

    [Fact]
    public void UserIdentity_ToString_NeverShowsThePassword()
    {
        var identity = UaUserIdentity.FromUserName("operator", "Hidden-77");
        Assert.Equal("user 'operator'", identity.ToString());
    }
}
