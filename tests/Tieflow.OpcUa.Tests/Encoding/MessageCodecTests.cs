using System.Reflection;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Tests.Encoding;

public sealed class MessageCodecTests
{
    private static IEnumerable<Type> EncodeableClasses() =>
        typeof(IEncodeable).Assembly.GetTypes().Where(t => typeof(IEncodeable).IsAssignableFrom(t) && t is { IsClass: true, IsAbstract: false });

    [Fact]
    public void Decode_EveryMessageType_DefaultInstanceRoundTrips()
    {
        foreach (var type in EncodeableClasses())
        {
            var message = (IEncodeable)Activator.CreateInstance(type)!;
            if (message.BinaryEncodingId == 0)
            {
                continue;
            }

            var bytes = MessageCodec.Encode(message);
            var back = MessageCodec.Decode(bytes);
            Assert.IsType(type, back);
            Assert.Equal(bytes, MessageCodec.Encode(back));
        }
    }

    [Fact]
    public void Encode_ReadRequest_StartsWithFourByteEncodingId631()
    {
        var request = new ReadRequest
        {
            TimestampsToReturn = TimestampsToReturn.Both,
            NodesToRead = [new ReadValueId { NodeId = NodeId.Parse("ns=2;s=Plant.Unit1.Flow"), AttributeId = Attributes.Value }],
        };
        var bytes = MessageCodec.Encode(request);

        // 631 = 0x0277 does not fit the two-byte form: four-byte form 01 00 77 02.
        Assert.Equal(new byte[] { 0x01, 0x00, 0x77, 0x02 }, bytes[..4]);
        var back = Assert.IsType<ReadRequest>(MessageCodec.Decode(bytes));
        Assert.Equal(request.NodesToRead[0].NodeId, back.NodesToRead[0].NodeId);
        Assert.Equal(TimestampsToReturn.Both, back.TimestampsToReturn);
    }

    [Fact]
    public void Encode_RequestHeaderDefault_MatchesDigestLayout()
    {
        // docs/opcua.md §1.4: null token, timestamp, handle, diagnostics, audit id, timeout hint, empty additional header (00 00 00).
        var header = new RequestHeader { RequestHandle = 7, TimeoutHint = 10000 };
        var writer = new UaBinaryWriter();
        header.Encode(writer);
        byte[] expected = [0x00, 0x00, 0, 0, 0, 0, 0, 0, 0, 0, 7, 0, 0, 0, 0, 0, 0, 0, 0xFF, 0xFF, 0xFF, 0xFF, 0x10, 0x27, 0, 0, 0x00, 0x00, 0x00];
        Assert.Equal(expected, writer.ToArray());
    }

    [Fact]
    public void Decode_PublishResponseWithDataChange_DecodesNotifications()
    {
        var response = new PublishResponse
        {
            SubscriptionId = 5,
            AvailableSequenceNumbers = [1, 2],
            NotificationMessage = new NotificationMessage
            {
                SequenceNumber = 2,
                NotificationData =
                [
                    new ExtensionObject(new NodeId(DataChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new DataChangeNotification
                    {
                        MonitoredItems = [new MonitoredItemNotification { ClientHandle = 9, Value = new DataValue { Value = Variant.From(1.25) } }],
                    }),
                ],
            },
        };
        var back = Assert.IsType<PublishResponse>(MessageCodec.Decode(MessageCodec.Encode(response)));
        var dcn = Assert.IsType<DataChangeNotification>(back.NotificationMessage.NotificationData[0].Body);
        Assert.Equal(9u, dcn.MonitoredItems[0].ClientHandle);
        Assert.Equal(1.25, (double)dcn.MonitoredItems[0].Value.Value.Value!, 15);
    }

    [Fact]
    public void Decode_ServiceFault_Id397()
    {
        var fault = new ServiceFault { ResponseHeader = new ResponseHeader { ServiceResult = StatusCodes.BadMessageNotAvailable } };
        var bytes = MessageCodec.Encode(fault);
        Assert.Equal(397u, MessageCodec.PeekEncodingId(bytes, 0, bytes.Length));
        var back = Assert.IsType<ServiceFault>(MessageCodec.Decode(bytes));
        Assert.Equal(StatusCodes.BadMessageNotAvailable, back.ResponseHeader.ServiceResult);
    }

    [Fact]
    public void Decode_UnknownService_BadServiceUnsupported()
    {
        // 673 is WriteRequest, which this library deliberately does not know.
        var writer = new UaBinaryWriter();
        writer.WriteNodeId(new NodeId(673u));
        var ex = Assert.Throws<UaDecodingException>(() => MessageCodec.Decode(writer.ToArray()));
        Assert.Equal(StatusCodes.BadServiceUnsupported, ex.Status);
    }

    [Theory]
    [InlineData(673u)] // WriteRequest (docs/opcua.md §1.5)
    [InlineData(712u)] // CallRequest (OPC 10000-4 §5.11.2; id from memory)
    public void Assembly_HasNoWriteOrCallRequestType(uint forbiddenId)
    {
        // Tieflow is read-only towards the plant: no structure of the library encodes a Write or Call request.
        foreach (var type in EncodeableClasses())
        {
            var instance = (IEncodeable)Activator.CreateInstance(type)!;
            Assert.NotEqual(forbiddenId, instance.BinaryEncodingId);
            Assert.DoesNotContain("Write", type.Name, StringComparison.Ordinal);
            Assert.False(type.Name.StartsWith("Call", StringComparison.Ordinal), type.Name);
        }

        Assert.False(EncodeableTypes.TryCreate(forbiddenId, out _));
    }

    [Fact]
    public void EncodingIds_DigestTable_Match()
    {
        // docs/opcua.md §1.5 (ids marked there as exchanged on the wire with node-opcua, or from node-opcua-constants).
        var expected = new Dictionary<Type, uint>
        {
            [typeof(OpenSecureChannelRequest)] = 446, [typeof(OpenSecureChannelResponse)] = 449, [typeof(CloseSecureChannelRequest)] = 452,
            [typeof(GetEndpointsRequest)] = 428, [typeof(GetEndpointsResponse)] = 431, [typeof(CreateSessionRequest)] = 461,
            [typeof(CreateSessionResponse)] = 464, [typeof(ActivateSessionRequest)] = 467, [typeof(ActivateSessionResponse)] = 470,
            [typeof(CloseSessionRequest)] = 473, [typeof(CloseSessionResponse)] = 476, [typeof(BrowseRequest)] = 527, [typeof(BrowseResponse)] = 530,
            [typeof(BrowseNextRequest)] = 533, [typeof(BrowseNextResponse)] = 536, [typeof(TranslateBrowsePathsToNodeIdsRequest)] = 554,
            [typeof(TranslateBrowsePathsToNodeIdsResponse)] = 557, [typeof(ReadRequest)] = 631, [typeof(ReadResponse)] = 634,
            [typeof(CreateMonitoredItemsRequest)] = 751, [typeof(CreateMonitoredItemsResponse)] = 754, [typeof(DeleteMonitoredItemsRequest)] = 781,
            [typeof(CreateSubscriptionRequest)] = 787, [typeof(CreateSubscriptionResponse)] = 790, [typeof(ModifySubscriptionRequest)] = 793,
            [typeof(PublishRequest)] = 826, [typeof(PublishResponse)] = 829, [typeof(RepublishRequest)] = 832, [typeof(RepublishResponse)] = 835,
            [typeof(TransferSubscriptionsRequest)] = 841, [typeof(TransferSubscriptionsResponse)] = 844, [typeof(DeleteSubscriptionsRequest)] = 847,
            [typeof(DeleteSubscriptionsResponse)] = 850, [typeof(ServiceFault)] = 397, [typeof(AnonymousIdentityToken)] = 321,
            [typeof(UserNameIdentityToken)] = 324, [typeof(DataChangeFilter)] = 724, [typeof(DataChangeNotification)] = 811,
            [typeof(StatusChangeNotification)] = 820, [typeof(EventNotificationList)] = 916, [typeof(ServerStatusDataType)] = 864,
            [typeof(Tieflow.OpcUa.Encoding.Range)] = 886, [typeof(EUInformation)] = 889, [typeof(FindServersRequest)] = 422,
        };
        foreach (var (type, id) in expected)
        {
            Assert.Equal(id, (uint)type.GetField("EncodingId", BindingFlags.Public | BindingFlags.Static)!.GetValue(null)!);
        }
    }
}
