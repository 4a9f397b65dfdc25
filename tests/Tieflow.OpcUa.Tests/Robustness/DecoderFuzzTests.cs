using System.Buffers.Binary;
using System.Diagnostics;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Robustness;

/// <summary>
/// Seeded fuzzing of the decoders: valid messages mutated by bit flips, truncations, extreme length fields and
/// spliced bytes. The only exception allowed is <see cref="UaDecodingException"/>; each message must decode or be
/// refused quickly and without allocating far beyond its own size.
/// </summary>
[Trait("Category", "Fuzz")]
public sealed class DecoderFuzzTests
{
    private const int Seed = 20260302;
    private const int MutationsPerMessage = 1500;
    private const long AllocationPerInputByte = 200;
    private const long FixedAllocation = 64 * 1024;

    private static readonly int[] ExtremeLengths = [-1, -2, int.MinValue, int.MaxValue, 0x7FFFFFF0, 16 * 1024 * 1024, (16 * 1024 * 1024) + 1, 1024 * 1024, (1024 * 1024) + 1, 65536, 255, 0];

    private static List<byte[]> Corpus()
    {
        var t = new DateTime(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);
        var values = new[]
        {
            Variant.From(1.5), Variant.From("Hot水"), Variant.From(new[] { 1, 2, 3, 4, 5, 6 }), new Variant(BuiltInType.Double, new double[] { 1, 2, 3, 4 }, [2, 2]),
            Variant.From(new Variant[] { Variant.From(true), Variant.From(new NodeId("x", 2)) }), Variant.From(Guid.Parse("72962b91-fa75-4ae6-8d28-b404dc7daf63")),
            Variant.From(new ExpandedNodeId(new NodeId(5u), "urn:x", 1)), Variant.From(new LocalizedText("t", "en")), Variant.From(new QualifiedName("q", 3)),
            Variant.From(new byte[] { 1, 2, 3 }), Variant.From(new XmlElement("<a/>")), Variant.From(StatusCodes.BadSensorFailure),
            Variant.From(new DataValue { Value = Variant.From(2.0), Status = StatusCodes.UncertainLastUsableValue, SourceTimestamp = t, SourcePicoseconds = 5 }),
            Variant.From(new ExtensionObject(new NodeId(886u), ExtensionObjectEncoding.Binary, new Tieflow.OpcUa.Encoding.Range { Low = 0, High = 100 })),
            Variant.From(new DiagnosticInfo { SymbolicId = 1, InnerDiagnosticInfo = new DiagnosticInfo { AdditionalInfo = "x", InnerStatusCode = StatusCodes.BadTimeout } }),
        };
        var notifications = Enumerable.Range(0, 20).Select(i => new MonitoredItemNotification
        {
            ClientHandle = (uint)i,
            Value = new DataValue { Value = values[i % values.Length], Status = StatusCodes.Good, SourceTimestamp = t, ServerTimestamp = t, ServerPicoseconds = 7 },
        }).ToArray();
        IEncodeable[] messages =
        [
            new PublishResponse
            {
                SubscriptionId = 3, AvailableSequenceNumbers = [1, 2],
                NotificationMessage = new NotificationMessage
                {
                    SequenceNumber = 2, PublishTime = t,
                    NotificationData =
                    [
                        new ExtensionObject(new NodeId(DataChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new DataChangeNotification { MonitoredItems = notifications }),
                        new ExtensionObject(new NodeId(StatusChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new StatusChangeNotification { Status = StatusCodes.BadTimeout }),
                    ],
                },
                Results = [StatusCodes.Good], DiagnosticInfos = [new DiagnosticInfo { Locale = 1 }],
            },
            new ReadResponse { Results = values.Select(v => new DataValue { Value = v, SourceTimestamp = t }).ToArray(), ResponseHeader = new ResponseHeader { StringTable = ["a", "b"] } },
            new BrowseResponse
            {
                Results =
                [
                    new BrowseResult
                    {
                        ContinuationPoint = [1, 2, 3, 4],
                        References = Enumerable.Range(0, 5).Select(i => new ReferenceDescription
                        {
                            ReferenceTypeId = new NodeId(35u), IsForward = true, NodeId = new ExpandedNodeId(new NodeId($"Plant.Tag{i}", 2)), BrowseName = new QualifiedName($"Tag{i}", 2),
                            DisplayName = new LocalizedText($"Tag{i}"), NodeClass = NodeClass.Variable, TypeDefinition = new ExpandedNodeId(new NodeId(63u)),
                        }).ToArray(),
                    },
                ],
            },
            new GetEndpointsResponse
            {
                Endpoints =
                [
                    new EndpointDescription
                    {
                        EndpointUrl = "opc.tcp://127.0.0.1:4841/sim", SecurityMode = MessageSecurityMode.None, SecurityPolicyUri = SecureChannelCodec.SecurityPolicyNoneUri,
                        Server = new ApplicationDescription { ApplicationUri = "urn:x", DiscoveryUrls = ["opc.tcp://127.0.0.1:4841/sim"] },
                        UserIdentityTokens = [new UserTokenPolicy { PolicyId = "anonymous", TokenType = UserTokenType.Anonymous }],
                    },
                ],
            },
            new CreateSessionResponse { SessionId = new NodeId(Guid.NewGuid(), 1), AuthenticationToken = new NodeId(new byte[16], 0), ServerNonce = new byte[32] },
            new CreateMonitoredItemsRequest
            {
                SubscriptionId = 1,
                ItemsToCreate =
                [
                    new MonitoredItemCreateRequest
                    {
                        ItemToMonitor = new ReadValueId { NodeId = new NodeId("Plant.Unit1.Flow", 2), AttributeId = 13 },
                        RequestedParameters = new MonitoringParameters
                        {
                            Filter = new ExtensionObject(new NodeId(DataChangeFilter.EncodingId), ExtensionObjectEncoding.Binary, new DataChangeFilter { DeadbandType = 1, DeadbandValue = 0.25 }),
                        },
                    },
                ],
            },
            new ServiceFault { ResponseHeader = new ResponseHeader { ServiceResult = StatusCodes.BadTimeout, ServiceDiagnostics = new DiagnosticInfo { AdditionalInfo = "d" } } },
        ];
        return messages.Select(m => MessageCodec.Encode(m)).ToList();
    }

    private static byte[] Mutate(byte[] original, Random random)
    {
        var bytes = (byte[])original.Clone();
        switch (random.Next(5))
        {
            case 0:
                for (var i = random.Next(1, 9); i > 0; i--)
                {
                    bytes[random.Next(bytes.Length)] ^= (byte)(1 << random.Next(8));
                }

                return bytes;
            case 1:
                return bytes[..random.Next(bytes.Length)];
            case 2:
                var at = random.Next(Math.Max(1, bytes.Length - 4));
                BinaryPrimitives.WriteInt32LittleEndian(bytes.AsSpan(at), ExtremeLengths[random.Next(ExtremeLengths.Length)]);
                return bytes;
            case 3:
                var start = random.Next(bytes.Length);
                var junk = new byte[random.Next(1, 16)];
                random.NextBytes(junk);
                return [.. bytes[..start], .. junk, .. bytes[start..]];
            default:
                // A length or mask byte set to an extreme at a random place, plus a flip.
                bytes[random.Next(bytes.Length)] = (byte)(random.Next(2) == 0 ? 0xFF : 0x80);
                bytes[random.Next(bytes.Length)] ^= 0x40;
                return bytes;
        }
    }

    [Fact]
    public void Decode_10000MutatedMessages_OnlyDecodingErrorsBoundedTimeAndAllocation()
    {
        var random = new Random(Seed);
        var corpus = Corpus();
        var count = 0;
        var refused = 0;
        var slowest = TimeSpan.Zero;
        long worstExcess = long.MinValue;
        long largestAllocation = 0;
        var watch = new Stopwatch();
        foreach (var original in corpus)
        {
            for (var i = 0; i < MutationsPerMessage; i++)
            {
                var mutated = Mutate(original, random);
                var before = GC.GetAllocatedBytesForCurrentThread();
                watch.Restart();
                try
                {
                    MessageCodec.Decode(mutated);
                }
                catch (UaDecodingException)
                {
                    refused++;
                }

                watch.Stop();
                var allocated = GC.GetAllocatedBytesForCurrentThread() - before;
                worstExcess = Math.Max(worstExcess, allocated - (AllocationPerInputByte * mutated.Length));
                largestAllocation = Math.Max(largestAllocation, allocated);
                slowest = watch.Elapsed > slowest ? watch.Elapsed : slowest;
                count++;
            }
        }

        Assert.True(count >= 10_000, $"only {count} messages");
        Assert.True(refused > count / 4, $"only {refused} of {count} refused: the mutations are too weak");

        // Bounded time: far below a second per message (the bound).
        Assert.True(slowest < TimeSpan.FromSeconds(1), $"slowest message took {slowest}");

        // Bounded allocation: lengths are checked against the bytes present, so a message allocates at most a small
        // multiple of its own size (objects per element) plus a fixed cost (reader, exception), never the 16 MiB limits.
        Assert.True(worstExcess < FixedAllocation, $"a message allocated {worstExcess} bytes beyond {AllocationPerInputByte} per input byte (largest {largestAllocation})");
    }

    [Fact]
    public void AddChunk_10000MutatedChunks_OnlyDecodingErrors()
    {
        var random = new Random(Seed + 1);
        var sender = new SecureChannelCodec(TransportLimits.Default) { ChannelId = 4, SendTokenId = 1, PeerReceiveBufferSize = 8192 };
        var body = Corpus()[0];
        var chunks = sender.EncodeChunks(TcpMessageType.Message, 9, [.. body, .. body, .. body, .. body, .. body, .. body], StatusCodes.BadRequestTooLarge)
            .Concat(new SecureChannelCodec(TransportLimits.Default).EncodeChunks(TcpMessageType.OpenSecureChannel, 1, body, StatusCodes.BadRequestTooLarge)).ToList();
        var fed = 0;
        for (var i = 0; i < 10_000; i++)
        {
            var chunk = Mutate(chunks[i % chunks.Count], random);
            var receiver = new SecureChannelCodec(new TransportLimits { MaxChunkCount = 4, MaxMessageSize = 20000 }) { ChannelId = 4, IsTokenAccepted = t => t == 1 };
            try
            {
                if (chunk.Length < 8)
                {
                    continue;
                }

                var (type, c, size) = TcpFrameReader.ParseHeader(chunk, 8192);
                if (size > chunk.Length)
                {
                    // A truncated frame: the stream reader would wait for the rest, then hit the socket's end.
                    continue;
                }

                fed++;
                receiver.AddChunk(new TcpFrame(type, c, chunk, size));
                if (type == TcpMessageType.Hello)
                {
                    TcpHello.Decode(new TcpFrame(type, c, chunk, size));
                }
            }
            catch (UaDecodingException)
            {
                // Refused cleanly: what the channel would turn into ERR + close.
            }
        }

        Assert.True(fed > 5000, $"only {fed} chunks reached the codec");
    }
}
