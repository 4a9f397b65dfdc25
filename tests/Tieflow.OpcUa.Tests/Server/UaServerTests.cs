using Microsoft.Extensions.Time.Testing;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Server;

/// <summary>
/// Our server on the wire, driven by <see cref="RawUaClient"/>: transport limits (OPC 10000-6 §7.1), the services
/// of the server table of docs/opcua.md §2.1, and subscriptions on a fake clock (keep-alive and sequence-number rules of
/// OPC 10000-4 §5.13.1, as observed on node-opcua, docs/opcua.md §1.11).
/// </summary>
public sealed class UaServerTests : IAsyncLifetime
{
    private static readonly DateTime Start = new(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);

    private readonly FakeTimeProvider _time = new(new DateTimeOffset(Start));
    private UaServer _server = null!;
    private NodeId _flow;
    private NodeId _level;
    private NodeId _name;
    private NodeId _tags;

    public async Task InitializeAsync()
    {
        _server = new UaServer(new UaServerOptions { ResourcePath = "/sim", Users = new Dictionary<string, string> { ["operator"] = "s3cret" } }, _time);
        var plant = _server.AddFolder(UaServer.ObjectsFolder, "Plant");
        var unit = _server.AddObject(plant, "Unit1");
        _flow = _server.AddVariable(unit, "Flow", new Variant(BuiltInType.Double, 1.0));
        _level = _server.AddVariable(unit, "Level", new Variant(BuiltInType.Double, 50.0), new UaVariableOptions { EngineeringUnitsRange = (0, 200) });
        _name = _server.AddVariable(unit, "Name", new Variant(BuiltInType.String, "feed"));
        _tags = _server.AddFolder(plant, "Tags");
        for (var i = 0; i < 300; i++)
        {
            _server.AddVariable(_tags, $"Tag{i:000}", new Variant(BuiltInType.Double, (double)i));
        }
        await _server.StartAsync();
    }

    public async Task DisposeAsync() => await _server.DisposeAsync();

    private string Url => $"opc.tcp://127.0.0.1:{_server.Port}/sim";

    [Fact]
    public async Task Hello_Valid_AcknowledgesWithTheServerLimits()
    {
        using var client = await ConnectAsync();

        await client.HelloAsync(Url);

        Assert.Equal(65536u, client.ServerReceiveBufferSize);
        Assert.Equal(65536u, client.ServerSendBufferSize);
        Assert.Equal(16u * 1024 * 1024, client.ServerMaxMessageSize);
        Assert.Equal(256u, client.ServerMaxChunkCount);
    }

    [Theory]
    [InlineData(1024u, 0x80AC0000u)] // Bad_ConnectionRejected, as node-opcua answers (docs/opcua.md §3).
    [InlineData(4096u, 0x80AC0000u)]
    public async Task Hello_BufferBelowMinimum_IsRefusedAndClosed(uint buffer, uint expected)
    {
        using var client = await ConnectAsync();

        await client.SendRawAsync(RawUaClient.Hello(Url, buffer, buffer));
        var (type, _, body) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(expected, RawUaClient.ErrorStatus(body).Code);
        await AssertClosedAsync(client);
    }

    [Fact]
    public async Task Message_BeforeHello_IsRefusedWithMessageTypeInvalid()
    {
        using var client = await ConnectAsync();

        await client.SendRawAsync(client.MessageChunk(new byte[20]));
        var (type, _, body) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadTcpMessageTypeInvalid, RawUaClient.ErrorStatus(body));
    }

    [Fact]
    public async Task Header_SizeBeyondBuffer_IsRefusedWithMessageTooLarge()
    {
        using var client = await ConnectAsync();
        await client.HelloAsync(Url);

        // A header that claims 100 MB: refused from the header alone, before any body is read or allocated.
        await client.SendRawAsync([(byte)'M', (byte)'S', (byte)'G', (byte)'F', 0x00, 0xE1, 0xF5, 0x05]);
        var (type, _, body) = await client.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadTcpMessageTooLarge, RawUaClient.ErrorStatus(body));
        await AssertClosedAsync(client);
    }

    [Theory]
    [InlineData("localhost")]
    [InlineData("127.0.0.1")]
    public async Task GetEndpoints_EchoesTheHostTheClientNamed(string host)
    {
        using var client = await OpenChannelAsync();

        var response = await client.CallAsync<GetEndpointsResponse>(new GetEndpointsRequest { EndpointUrl = $"opc.tcp://{host}:{_server.Port}/sim" });

        var endpoint = Assert.Single(response.Endpoints);
        Assert.Equal($"opc.tcp://{host}:{_server.Port}/sim", endpoint.EndpointUrl);
        Assert.Equal(MessageSecurityMode.None, endpoint.SecurityMode);
        Assert.Contains(endpoint.UserIdentityTokens, t => t.TokenType == UserTokenType.Anonymous);
        Assert.Equal("http://opcfoundation.org/UA-Profile/Transport/uatcp-uasc-uabinary", endpoint.TransportProfileUri);
    }

    [Fact]
    public async Task Read_AttributesOfAVariable_AnswersWhatGenericClientsAsk()
    {
        using var client = await SessionAsync();
        uint[] attributes = [1, 2, 3, 4, 13, 14, 15, 17, 18, 19, 20, 8];

        var response = await client.CallAsync<ReadResponse>(new ReadRequest
        {
            TimestampsToReturn = TimestampsToReturn.Both,
            NodesToRead = [.. attributes.Select(a => new ReadValueId { NodeId = _flow, AttributeId = a })],
        });

        var r = response.Results;
        Assert.Equal(_flow, (NodeId)r[0].Value.Value!);
        Assert.Equal((int)NodeClass.Variable, (int)r[1].Value.Value!);
        Assert.Equal(new QualifiedName("Flow", 2), (QualifiedName)r[2].Value.Value!);
        Assert.Equal(1.0, (double)r[4].Value.Value!, 12);
        Assert.Equal(Start, r[4].SourceTimestamp);
        Assert.Equal(new NodeId(11u), (NodeId)r[5].Value.Value!);
        Assert.Equal(-1, (int)r[6].Value.Value!);
        Assert.Equal((byte)1, (byte)r[7].Value.Value!);
        Assert.Equal((byte)1, (byte)r[8].Value.Value!);
        Assert.False((bool)r[10].Value.Value!);
        Assert.Equal(StatusCodes.BadAttributeIdInvalid, r[11].Status);
    }

    [Fact]
    public async Task Read_StandardServerNodes_AnswerNamespacesAndState()
    {
        using var client = await SessionAsync();

        var response = await client.CallAsync<ReadResponse>(new ReadRequest
        {
            NodesToRead =
            [
                new ReadValueId { NodeId = new NodeId(2255u), AttributeId = 13 },
                new ReadValueId { NodeId = new NodeId(2259u), AttributeId = 13 },
                new ReadValueId { NodeId = new NodeId(2256u), AttributeId = 13 },
                new ReadValueId { NodeId = new NodeId("Nope", 2), AttributeId = 13 },
            ],
        });

        Assert.Equal(["http://opcfoundation.org/UA/", "urn:tieflow:opcua-server", "urn:tieflow:plant"], (string[])response.Results[0].Value.Value!);
        Assert.Equal((int)ServerState.Running, (int)response.Results[1].Value.Value!);
        var status = Assert.IsType<ServerStatusDataType>(((ExtensionObject)response.Results[2].Value.Value!).Body);
        Assert.Equal(ServerState.Running, status.State);
        Assert.Equal(StatusCodes.BadNodeIdUnknown, response.Results[3].Status);
    }

    [Fact]
    public async Task Read_900ValuesWith8192ByteBuffer_ArrivesInSeveralChunks()
    {
        using var client = await SessionAsync(receiveBufferSize: 8192);

        var response = await client.CallAsync<ReadResponse>(new ReadRequest
        {
            TimestampsToReturn = TimestampsToReturn.Both,
            NodesToRead = [.. Enumerable.Range(0, 300).SelectMany(i => new uint[] { 13, 3, 4 }.Select(a => new ReadValueId { NodeId = new NodeId($"Plant.Tags.Tag{i:000}", 2), AttributeId = a }))],
        });

        Assert.True(client.ChunksOfLastResponse > 1, $"expected several chunks, got {client.ChunksOfLastResponse}");
        Assert.Equal(900, response.Results.Length);
        Assert.Equal(299.0, (double)response.Results[897].Value.Value!, 12);
        Assert.Equal(new LocalizedText("Tag299"), (LocalizedText)response.Results[899].Value.Value!);
    }

    [Fact]
    public async Task Browse_WithMaxReferences_PagesThroughContinuationPoints()
    {
        using var client = await SessionAsync();
        var names = new List<string>();

        var first = await client.CallAsync<BrowseResponse>(new BrowseRequest
        {
            RequestedMaxReferencesPerNode = 100,
            NodesToBrowse = [new BrowseDescription { NodeId = _tags, ReferenceTypeId = new NodeId(33u), IncludeSubtypes = true, ResultMask = 63 }],
        });
        var result = Assert.Single(first.Results);
        names.AddRange(result.References.Select(r => r.BrowseName.Name!));
        var nexts = 0;
        while (result.ContinuationPoint is { Length: > 0 } point)
        {
            var next = await client.CallAsync<BrowseNextResponse>(new BrowseNextRequest { ContinuationPoints = [point] });
            result = Assert.Single(next.Results);
            names.AddRange(result.References.Select(r => r.BrowseName.Name!));
            nexts++;
        }

        Assert.Equal(2, nexts);
        Assert.Equal(Enumerable.Range(0, 300).Select(i => $"Tag{i:000}"), names);
    }

    [Fact]
    public async Task Browse_Objects_ShowsServerAndPlantWithTypes()
    {
        using var client = await SessionAsync();

        var response = await client.CallAsync<BrowseResponse>(new BrowseRequest
        {
            NodesToBrowse = [new BrowseDescription { NodeId = new NodeId(85u), ReferenceTypeId = new NodeId(33u), IncludeSubtypes = true, ResultMask = 63 }],
        });

        var refs = Assert.Single(response.Results).References;
        var server = Assert.Single(refs, r => r.BrowseName.Name == "Server");
        Assert.Equal(new ExpandedNodeId(new NodeId(2253u)), server.NodeId);
        Assert.Equal(new ExpandedNodeId(new NodeId(2004u)), server.TypeDefinition);
        var plant = Assert.Single(refs, r => r.BrowseName.Name == "Plant");
        Assert.Equal(NodeClass.Object, plant.NodeClass);
        Assert.Equal(new NodeId(35u), plant.ReferenceTypeId);
        Assert.Equal(new ExpandedNodeId(new NodeId(61u)), plant.TypeDefinition);
    }

    [Fact]
    public async Task Translate_PathAndUnknownName_ResolveOrGiveNoMatch()
    {
        using var client = await SessionAsync();
        static BrowsePath Path(params string[] names) => new()
        {
            StartingNode = new NodeId(84u),
            RelativePath = new RelativePath
            {
                Elements = [.. names.Select(n => new RelativePathElement
                {
                    ReferenceTypeId = new NodeId(33u), IncludeSubtypes = true, TargetName = QualifiedName.Parse(n),
                })],
            },
        };

        var response = await client.CallAsync<TranslateBrowsePathsToNodeIdsResponse>(new TranslateBrowsePathsToNodeIdsRequest
        {
            BrowsePaths = [Path("Objects", "2:Plant", "2:Unit1", "2:Flow"), Path("Objects", "2:Plant", "2:Nothing")],
        });

        var target = Assert.Single(response.Results[0].Targets);
        Assert.Equal(new ExpandedNodeId(_flow), target.TargetId);
        Assert.Equal(uint.MaxValue, target.RemainingPathIndex);
        Assert.Equal(StatusCodes.BadNoMatch, response.Results[1].StatusCode);
    }

    [Fact]
    public async Task Write_IsNotOffered_AnswersServiceUnsupported()
    {
        using var client = await SessionAsync();
        var body = new UaBinaryWriter();
        body.WriteNodeId(new NodeId(673u)); // WriteRequest, which this library does not even define.
        new RequestHeader { AuthenticationToken = client.AuthenticationToken, RequestHandle = 99 }.Encode(body);
        body.WriteInt32(0);

        await client.SendRawAsync(client.MessageChunk(body.WrittenSpan));
        var response = await client.ReadResponseAsync();

        var fault = Assert.IsType<ServiceFault>(response);
        Assert.Equal(StatusCodes.BadServiceUnsupported, fault.ResponseHeader.ServiceResult);
    }

    [Theory]
    [InlineData("operator", "s3cret", 0x00000000u)]
    [InlineData("operator", "wrong", 0x801F0000u)] // Bad_UserAccessDenied
    [InlineData("nobody", "s3cret", 0x801F0000u)]
    public async Task ActivateSession_UserName_ChecksThePassword(string user, string password, uint expected)
    {
        using var client = await OpenChannelAsync();
        var created = await client.CallAsync<CreateSessionResponse>(new CreateSessionRequest { EndpointUrl = Url, SessionName = "u", RequestedSessionTimeout = 60_000 });
        client.AuthenticationToken = created.AuthenticationToken;
        var policy = Assert.Single(created.ServerEndpoints[0].UserIdentityTokens, t => t.TokenType == UserTokenType.UserName);

        var response = await client.RequestAsync(new ActivateSessionRequest
        {
            UserIdentityToken = new ExtensionObject(new NodeId(UserNameIdentityToken.EncodingId), ExtensionObjectEncoding.Binary,
                new UserNameIdentityToken { PolicyId = policy.PolicyId, UserName = user, Password = System.Text.Encoding.UTF8.GetBytes(password) }),
        });

        Assert.Equal(expected, response.ResponseHeader.ServiceResult.Code);
    }

    [Fact]
    public async Task Publish_SubscriptionCycle_SendsInitialValueKeepAlivesAndChanges()
    {
        using var client = await SessionAsync();
        var subscription = await client.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest
        {
            RequestedPublishingInterval = 100, RequestedLifetimeCount = 30, RequestedMaxKeepAliveCount = 3, PublishingEnabled = true,
        });
        Assert.Equal(100, subscription.RevisedPublishingInterval, 12);
        var created = await client.CallAsync<CreateMonitoredItemsResponse>(new CreateMonitoredItemsRequest
        {
            SubscriptionId = subscription.SubscriptionId,
            TimestampsToReturn = TimestampsToReturn.Both,
            ItemsToCreate = [Monitor(_flow, 1, null)],
        });
        Assert.Equal(StatusCodes.Good, created.Results[0].StatusCode);

        // First cycle: the initial value, sequence number 1.
        var first = await PublishAfterAsync(client, TimeSpan.FromMilliseconds(100));
        Assert.Equal(1u, first.NotificationMessage.SequenceNumber);
        var change = Assert.IsType<DataChangeNotification>(Assert.Single(first.NotificationMessage.NotificationData).Body);
        Assert.Equal(1.0, (double)Assert.Single(change.MonitoredItems).Value.Value.Value!, 12);

        // Three empty cycles: a keep-alive carrying the next sequence number (2), which it does not consume.
        var keepAlive = await PublishAfterAsync(client, TimeSpan.FromMilliseconds(300), new SubscriptionAcknowledgement { SubscriptionId = subscription.SubscriptionId, SequenceNumber = 1 });
        Assert.Empty(keepAlive.NotificationMessage.NotificationData);
        Assert.Equal(2u, keepAlive.NotificationMessage.SequenceNumber);
        Assert.Equal([StatusCodes.Good], keepAlive.Results);

        var measured = Start.AddSeconds(-30);
        _server.UpdateValue(_flow, new Variant(BuiltInType.Double, 2.5), StatusCodes.UncertainLastUsableValue, measured);
        var data = await PublishAfterAsync(client, TimeSpan.FromMilliseconds(100));
        Assert.Equal(2u, data.NotificationMessage.SequenceNumber);
        var value = Assert.Single(Assert.IsType<DataChangeNotification>(Assert.Single(data.NotificationMessage.NotificationData).Body).MonitoredItems).Value;
        Assert.Equal(2.5, (double)value.Value.Value!, 12);
        Assert.Equal(StatusCodes.UncertainLastUsableValue, value.Status);
        Assert.Equal(measured, value.SourceTimestamp);
        Assert.Equal([2u], data.AvailableSequenceNumbers);

        var republished = await client.CallAsync<RepublishResponse>(new RepublishRequest { SubscriptionId = subscription.SubscriptionId, RetransmitSequenceNumber = 2 });
        Assert.Equal(2u, republished.NotificationMessage.SequenceNumber);
        var missing = await client.RequestAsync(new RepublishRequest { SubscriptionId = subscription.SubscriptionId, RetransmitSequenceNumber = 1 });
        Assert.Equal(StatusCodes.BadMessageNotAvailable, missing.ResponseHeader.ServiceResult);
    }

    [Theory]
    [InlineData("Flow", 2u, 10.0, 0x80440000u)]  // percent deadband without EURange: Bad_MonitoredItemFilterUnsupported
    [InlineData("Level", 2u, 150.0, 0x808E0000u)] // 150 %: Bad_DeadbandFilterInvalid
    [InlineData("Name", 1u, 1.0, 0x80450000u)]    // deadband on a string: Bad_FilterNotAllowed
    [InlineData("Level", 2u, 10.0, 0x00000000u)]
    [InlineData("Flow", 1u, 0.5, 0x00000000u)]
    public async Task CreateMonitoredItems_Deadbands_GivePerItemErrorsLikeNodeOpcua(string name, uint type, double value, uint expected)
    {
        using var client = await SessionAsync();
        var subscription = await client.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest { RequestedPublishingInterval = 100, RequestedMaxKeepAliveCount = 3, RequestedLifetimeCount = 30 });
        var filter = new DataChangeFilter { Trigger = DataChangeTrigger.StatusValue, DeadbandType = type, DeadbandValue = value };

        var created = await client.CallAsync<CreateMonitoredItemsResponse>(new CreateMonitoredItemsRequest
        {
            SubscriptionId = subscription.SubscriptionId,
            TimestampsToReturn = TimestampsToReturn.Source,
            ItemsToCreate = [Monitor(new NodeId($"Plant.Unit1.{name}", 2), 1, filter)],
        });

        Assert.Equal(expected, Assert.Single(created.Results).StatusCode.Code);
    }

    [Fact]
    public async Task Publish_NoPublishRequests_SubscriptionExpiresAndReportsTimeout()
    {
        using var client = await SessionAsync();
        var subscription = await client.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest
        {
            RequestedPublishingInterval = 100, RequestedLifetimeCount = 6, RequestedMaxKeepAliveCount = 2,
        });

        for (var i = 0; i < 7; i++)
        {
            _time.Advance(TimeSpan.FromMilliseconds(100));
        }
        var response = await client.CallAsync<PublishResponse>(new PublishRequest());

        Assert.Equal(subscription.SubscriptionId, response.SubscriptionId);
        var status = Assert.IsType<StatusChangeNotification>(Assert.Single(response.NotificationMessage.NotificationData).Body);
        Assert.Equal(StatusCodes.BadTimeout, status.Status);
        var next = await client.RequestAsync(new PublishRequest());
        Assert.Equal(StatusCodes.BadNoSubscription, next.ResponseHeader.ServiceResult);
    }

    [Fact]
    public async Task Stop_WithParkedPublish_AnswersItWithSessionClosed()
    {
        using var client = await SessionAsync();
        await client.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest { RequestedPublishingInterval = 1000, RequestedMaxKeepAliveCount = 100, RequestedLifetimeCount = 300 });
        _time.Advance(TimeSpan.FromSeconds(1));
        _ = await client.CallAsync<PublishResponse>(new PublishRequest());
        await client.SendRawAsync(client.MessageChunk(client.EncodeRequest(new PublishRequest())));
        for (var i = 0; i < 500 && _server.ParkedPublishCount == 0; i++)
        {
            await Task.Delay(10);
        }
        Assert.Equal(1, _server.ParkedPublishCount);

        await _server.StopAsync();
        var response = await client.ReadResponseAsync();

        Assert.IsType<ServiceFault>(response);
        Assert.Equal(StatusCodes.BadSessionClosed, response.ResponseHeader.ServiceResult);
    }

    [Fact]
    public async Task OpenSecureChannel_Renew_IssuesANewTokenAndStillAcceptsTheOldOne()
    {
        using var client = await OpenChannelAsync();
        var first = client.TokenId;

        var renewed = await client.OpenAsync(SecurityTokenRequestType.Renew);
        var second = renewed.SecurityToken.TokenId;

        Assert.NotEqual(first, second);
        Assert.Equal(client.ChannelId, renewed.SecurityToken.ChannelId);
        // Until the client uses the new token, the old one stays valid (OPC 10000-4 §5.5.2.1).
        client.TokenId = first;
        await client.CallAsync<GetEndpointsResponse>(new GetEndpointsRequest { EndpointUrl = Url });
        client.TokenId = second;
        await client.CallAsync<GetEndpointsResponse>(new GetEndpointsRequest { EndpointUrl = Url });
    }

    [Fact]
    public async Task ActivateSession_OnANewChannel_MovesTheSessionAndItsSubscriptions()
    {
        using var first = await SessionAsync();
        var subscription = await first.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest { RequestedPublishingInterval = 100, RequestedMaxKeepAliveCount = 3, RequestedLifetimeCount = 30 });
        using var second = await OpenChannelAsync();
        second.AuthenticationToken = first.AuthenticationToken;

        await second.CallAsync<ActivateSessionResponse>(new ActivateSessionRequest());
        var onOld = await first.RequestAsync(new ReadRequest { NodesToRead = [new ReadValueId { NodeId = _flow, AttributeId = 13 }] });
        var modify = await second.CallAsync<ModifySubscriptionResponse>(new ModifySubscriptionRequest
        {
            SubscriptionId = subscription.SubscriptionId, RequestedPublishingInterval = 200, RequestedMaxKeepAliveCount = 3, RequestedLifetimeCount = 30,
        });

        Assert.Equal(StatusCodes.BadSecureChannelIdInvalid, onOld.ResponseHeader.ServiceResult);
        Assert.Equal(200, modify.RevisedPublishingInterval, 12);
    }

    [Fact]
    public async Task TransferSubscriptions_ToANewSession_MovesItAndTellsTheOldSession()
    {
        using var first = await SessionAsync();
        var subscription = await first.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest { RequestedPublishingInterval = 100, RequestedMaxKeepAliveCount = 3, RequestedLifetimeCount = 30 });
        using var second = await SessionAsync();

        var transfer = await second.CallAsync<TransferSubscriptionsResponse>(new TransferSubscriptionsRequest { SubscriptionIds = [subscription.SubscriptionId, 9999], SendInitialValues = true });
        var old = await first.CallAsync<PublishResponse>(new PublishRequest());

        Assert.Equal(StatusCodes.Good, transfer.Results[0].StatusCode);
        Assert.Equal(StatusCodes.BadSubscriptionIdInvalid, transfer.Results[1].StatusCode);
        var status = Assert.IsType<StatusChangeNotification>(Assert.Single(old.NotificationMessage.NotificationData).Body);
        Assert.Equal(StatusCodes.GoodSubscriptionTransferred, status.Status);
    }

    [Fact]
    public async Task Publish_MoreThanTheParkingLimit_AnswersTheOldestWithTooManyPublishRequests()
    {
        using var client = await SessionAsync();
        await client.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest { RequestedPublishingInterval = 1000, RequestedMaxKeepAliveCount = 100, RequestedLifetimeCount = 300 });
        _time.Advance(TimeSpan.FromSeconds(1));
        _ = await client.CallAsync<PublishResponse>(new PublishRequest());

        for (var i = 0; i < 21; i++)
        {
            await client.SendRawAsync(client.MessageChunk(client.EncodeRequest(new PublishRequest())));
        }
        var response = await client.ReadResponseAsync();

        Assert.IsType<ServiceFault>(response);
        Assert.Equal(StatusCodes.BadTooManyPublishRequests, response.ResponseHeader.ServiceResult);
    }

    [Fact]
    public async Task FindServers_DescribesThisServer()
    {
        using var client = await OpenChannelAsync();

        var response = await client.CallAsync<FindServersResponse>(new FindServersRequest { EndpointUrl = Url });

        var server = Assert.Single(response.Servers);
        Assert.Equal("urn:tieflow:opcua-server", server.ApplicationUri);
        Assert.Equal(ApplicationType.Server, server.ApplicationType);
        Assert.Equal(Url, Assert.Single(server.DiscoveryUrls));
    }

    [Fact]
    public async Task Connect_BeyondMaxConnections_IsRefusedWithServerTooBusy()
    {
        await using var server = new UaServer(new UaServerOptions { MaxConnections = 2 });
        await server.StartAsync();
        using var a = new RawUaClient();
        using var b = new RawUaClient();
        using var c = new RawUaClient();
        await a.ConnectAsync(server.Port);
        await b.ConnectAsync(server.Port);
        await a.HelloAsync(server.EndpointUrl);
        await b.HelloAsync(server.EndpointUrl);

        await c.ConnectAsync(server.Port);
        var (type, _, body) = await c.ReadMessageAsync();

        Assert.Equal("ERR", type);
        Assert.Equal(StatusCodes.BadTcpServerTooBusy, RawUaClient.ErrorStatus(body));
    }

    [Fact]
    public async Task Publish_MonitoringServerCurrentTime_ReportsTheComputedValueAsTimePasses()
    {
        using var client = await SessionAsync();
        var subscription = await client.CallAsync<CreateSubscriptionResponse>(new CreateSubscriptionRequest { RequestedPublishingInterval = 100, RequestedMaxKeepAliveCount = 3, RequestedLifetimeCount = 30, PublishingEnabled = true });
        var created = await client.CallAsync<CreateMonitoredItemsResponse>(new CreateMonitoredItemsRequest
        {
            SubscriptionId = subscription.SubscriptionId,
            TimestampsToReturn = TimestampsToReturn.Both,
            ItemsToCreate = [Monitor(new NodeId(2258u), 1, null)],
        });
        Assert.Equal(StatusCodes.Good, Assert.Single(created.Results).StatusCode);

        var first = await PublishAfterAsync(client, TimeSpan.FromMilliseconds(100));
        _time.Advance(TimeSpan.FromSeconds(1));
        var second = await PublishAfterAsync(client, TimeSpan.FromMilliseconds(100));

        DateTime Time(PublishResponse r) => (DateTime)Assert.IsType<DataChangeNotification>(Assert.Single(r.NotificationMessage.NotificationData).Body).MonitoredItems[^1].Value.Value.Value!;
        Assert.True(Time(second) > Time(first), $"{Time(first):O} then {Time(second):O}");
    }

    [Fact]
    public void UpdateValue_WrongType_NamesTheVariableAndTypes()
    {
        var e = Assert.Throws<ArgumentException>(() => _server.UpdateValue(_flow, new Variant(BuiltInType.String, "x"), StatusCodes.Good, Start));

        Assert.Contains("ns=2;s=Plant.Unit1.Flow", e.Message, StringComparison.Ordinal);
        Assert.Contains("Double", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AddVariable_UnknownParent_IsRefused()
    {
        var e = Assert.Throws<ArgumentException>(() => _server.AddVariable(new NodeId("Nope", 2), "X", new Variant(BuiltInType.Double, 1.0)));

        Assert.Contains("ns=2;s=Nope", e.Message, StringComparison.Ordinal);
    }

    private static MonitoredItemCreateRequest Monitor(NodeId node, uint handle, DataChangeFilter? filter) => new()
    {
        ItemToMonitor = new ReadValueId { NodeId = node, AttributeId = 13 },
        MonitoringMode = MonitoringMode.Reporting,
        RequestedParameters = new MonitoringParameters
        {
            ClientHandle = handle,
            SamplingInterval = 0,
            QueueSize = 10,
            DiscardOldest = true,
            Filter = filter is null ? ExtensionObject.Null : new ExtensionObject(new NodeId(DataChangeFilter.EncodingId), ExtensionObjectEncoding.Binary, filter),
        },
    };

    /// <summary>Parks a Publish request, then advances the fake clock so that publishing cycles run.</summary>
    private async Task<PublishResponse> PublishAfterAsync(RawUaClient client, TimeSpan advance, params SubscriptionAcknowledgement[] acks)
    {
        await client.SendRawAsync(client.MessageChunk(client.EncodeRequest(new PublishRequest { SubscriptionAcknowledgements = acks })));
        // Let the server park the request before the clock moves.
        await WaitUntilAsync(() => _server.ParkedPublishCount > 0);
        for (var elapsed = TimeSpan.Zero; elapsed < advance; elapsed += TimeSpan.FromMilliseconds(100))
        {
            await Task.Delay(20);
            _time.Advance(TimeSpan.FromMilliseconds(100));
        }
        var response = await client.ReadResponseAsync();
        return Assert.IsType<PublishResponse>(response);
    }

    private static async Task WaitUntilAsync(Func<bool> condition)
    {
        for (var i = 0; i < 50 && !condition(); i++)
        {
            await Task.Delay(10);
        }
        await Task.Delay(30);
    }

    private async Task<RawUaClient> ConnectAsync()
    {
        var client = new RawUaClient();
        await client.ConnectAsync(_server.Port);
        return client;
    }

    private async Task<RawUaClient> OpenChannelAsync(uint receiveBufferSize = 65536)
    {
        var client = await ConnectAsync();
        await client.HelloAsync(Url, receiveBufferSize);
        await client.OpenAsync();
        return client;
    }

    private async Task<RawUaClient> SessionAsync(uint receiveBufferSize = 65536)
    {
        var client = await OpenChannelAsync(receiveBufferSize);
        await client.CreateAndActivateSessionAsync(Url);
        return client;
    }

    private static async Task AssertClosedAsync(RawUaClient client)
    {
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(5));
        var buffer = new byte[16];
        var n = await client.Stream.ReadAsync(buffer, cts.Token);
        Assert.Equal(0, n);
    }
}
