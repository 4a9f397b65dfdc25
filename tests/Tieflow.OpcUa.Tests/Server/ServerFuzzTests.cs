using System.Buffers.Binary;
using System.Diagnostics;
using System.Net.Sockets;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Server;

/// <summary>
/// Seeded fuzzing of our server over loopback: valid Hello, OpenSecureChannel and service messages are mutated (bit
/// flips, truncations, length fields set to extremes, random bytes) and sent on fresh connections. The server must
/// answer or close each connection within a second, refuse bad input only with the statuses its limits name (never
/// the internal-error status that marks a defect), and still serve a normal session afterwards.
/// </summary>
[Trait("Category", "Fuzz")]
public sealed class ServerFuzzTests
{
    private const int Messages = 10_000;
    private const int Workers = 4;
    private static readonly TimeSpan PerMessage = TimeSpan.FromSeconds(1);

    private static readonly HashSet<uint> NamedStatuses =
    [
        StatusCodes.BadTcpMessageTooLarge.Code, StatusCodes.BadTcpMessageTypeInvalid.Code, StatusCodes.BadDecodingError.Code,
        StatusCodes.BadEncodingLimitsExceeded.Code, StatusCodes.BadConnectionRejected.Code, StatusCodes.BadSecurityPolicyRejected.Code,
        StatusCodes.BadSecurityModeRejected.Code, StatusCodes.BadTcpSecureChannelUnknown.Code, StatusCodes.BadSequenceNumberInvalid.Code,
        StatusCodes.BadSecureChannelTokenUnknown.Code, StatusCodes.BadTcpEndpointUrlInvalid.Code,
    ];

    [Fact]
    public async Task Server_10000MutatedMessages_NeverHangsOrFailsInternally()
    {
        await using var server = new UaServer(new UaServerOptions { ResourcePath = "/sim" });
        var unit = server.AddObject(server.AddFolder(UaServer.ObjectsFolder, "Plant"), "Unit1");
        var flow = server.AddVariable(unit, "Flow", new Variant(BuiltInType.Double, 1.0));
        await server.StartAsync();
        var url = server.EndpointUrl;
        var corpus = BuildCorpus(url, flow);

        var stopwatch = Stopwatch.StartNew();
        var outcomes = await Task.WhenAll(Enumerable.Range(0, Workers).Select(w => Task.Run(() => WorkerAsync(server.Port, url, corpus, w))));
        stopwatch.Stop();

        var total = outcomes.Aggregate(new Outcome(), (a, b) => a.Add(b));
        Assert.Equal(Messages, total.Sent);
        Assert.True(total.Retried < Messages / 100, $"{total.Retried} slow answers of {Messages}: the server is slow, not the machine");
        Assert.True(total.Hangs.Count == 0, $"no answer or close within {PerMessage}: {string.Join("; ", total.Hangs.Take(5))}");
        Assert.True(total.UnexpectedStatuses.Count == 0, $"unexpected ERR statuses: {string.Join("; ", total.UnexpectedStatuses.Take(5))}");
        Assert.True(total.Errors > Messages / 10, $"the mutations should be refused often; {total.Errors} ERR of {Messages}");

        // The server still serves a normal session.
        using var client = new RawUaClient();
        await client.ConnectAsync(server.Port);
        await client.HelloAsync(url);
        await client.OpenAsync();
        await client.CreateAndActivateSessionAsync(url);
        var read = await client.CallAsync<ReadResponse>(new ReadRequest { NodesToRead = [new ReadValueId { NodeId = flow, AttributeId = 13 }] });
        Assert.Equal(1.0, (double)read.Results[0].Value.Value!, 12);
        Assert.True(stopwatch.Elapsed < TimeSpan.FromSeconds(60), $"fuzzing took {stopwatch.Elapsed}");
    }

    private static async Task<Outcome> WorkerAsync(int port, string url, Corpus corpus, int worker)
    {
        var outcome = new Outcome();
        // One seed per worker: the run is reproducible.
        var random = new Random(20261201 + worker);
        for (var i = worker; i < Messages; i += Workers)
        {
            var stage = i % 3;
            var original = stage switch
            {
                0 => corpus.Hello,
                1 => corpus.Open,
                _ => corpus.Requests[random.Next(corpus.Requests.Count)],
            };
            var mutated = Mutate(original, random, keepHeaderType: stage == 2 || random.Next(4) != 0);
            outcome.Sent++;
            var (status, elapsed, answered) = await SendOneAsync(port, url, stage, mutated);
            if (answered && elapsed > PerMessage)
            {
                // The input is deterministic, so a real hang is slow every time; one slow answer under a loaded
                // machine (other test projects run beside this one) is sent again before it counts.
                outcome.Retried++;
                (_, elapsed, answered) = await SendOneAsync(port, url, stage, mutated);
            }
            if (elapsed > PerMessage || !answered)
            {
                outcome.Hangs.Add($"message {i} (stage {stage}, {mutated.Length} bytes): {elapsed.TotalMilliseconds:F0} ms");
            }
            if (status is { } s)
            {
                outcome.Errors++;
                if (!NamedStatuses.Contains(s))
                {
                    outcome.UnexpectedStatuses.Add($"message {i} (stage {stage}): {new StatusCode(s)}");
                }
            }
        }
        return outcome;
    }

    /// <summary>Sends the valid prefix of a stage, then the mutated message, closes our sending side and waits for the server's reaction.</summary>
    private static async Task<(uint? ErrStatus, TimeSpan Elapsed, bool Answered)> SendOneAsync(int port, string url, int stage, byte[] mutated)
    {
        using var client = new RawUaClient { Timeout = TimeSpan.FromSeconds(5) };
        await client.ConnectAsync(port);
        if (stage >= 1)
        {
            await client.HelloAsync(url);
        }
        if (stage >= 2)
        {
            await client.OpenAsync();
            // Fit the mutated message to this connection's channel, token and sequence numbers, so that the mutation
            // reaches the decoder instead of stopping at the header checks.
            if (mutated.Length >= 24 && mutated[0] == (byte)'M')
            {
                BinaryPrimitives.WriteUInt32LittleEndian(mutated.AsSpan(8), client.ChannelId);
                BinaryPrimitives.WriteUInt32LittleEndian(mutated.AsSpan(12), client.TokenId);
                BinaryPrimitives.WriteUInt32LittleEndian(mutated.AsSpan(16), 2);
            }
        }
        var stopwatch = Stopwatch.StartNew();
        uint? status = null;
        try
        {
            await client.SendRawAsync(mutated);
            client.Stream.Socket.Shutdown(SocketShutdown.Send);
            using var cts = new CancellationTokenSource(PerMessage + TimeSpan.FromSeconds(4));
            var header = new byte[8];
            while (true)
            {
                var n = await ReadSomeAsync(client.Stream, header, cts.Token);
                if (n < 8)
                {
                    return (status, stopwatch.Elapsed, true);
                }
                var size = BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(4));
                var body = new byte[Math.Clamp((int)size - 8, 0, 1 << 24)];
                await client.Stream.ReadExactlyAsync(body, cts.Token);
                if (header[0] == (byte)'E' && body.Length >= 4)
                {
                    status = BinaryPrimitives.ReadUInt32LittleEndian(body);
                }
            }
        }
        catch (OperationCanceledException)
        {
            return (status, stopwatch.Elapsed, false);
        }
        catch (Exception e) when (e is IOException or SocketException or EndOfStreamException)
        {
            // A reset counts as closing.
            return (status, stopwatch.Elapsed, true);
        }
    }

    private static async Task<int> ReadSomeAsync(NetworkStream stream, byte[] buffer, CancellationToken ct)
    {
        var read = 0;
        while (read < buffer.Length)
        {
            var n = await stream.ReadAsync(buffer.AsMemory(read), ct);
            if (n == 0)
            {
                return read;
            }
            read += n;
        }
        return read;
    }

    private static byte[] Mutate(byte[] original, Random random, bool keepHeaderType)
    {
        var bytes = (byte[])original.Clone();
        var start = keepHeaderType ? 4 : 0;
        switch (random.Next(5))
        {
            case 0:
                // Bit flips.
                for (var k = random.Next(1, 9); k > 0; k--)
                {
                    var at = random.Next(start, bytes.Length);
                    bytes[at] ^= (byte)(1 << random.Next(8));
                }
                return bytes;
            case 1:
                // Truncation, with the size field left as it was or fitted to the new length.
                var length = random.Next(1, bytes.Length);
                var cut = bytes.AsSpan(0, length).ToArray();
                if (length >= 8 && random.Next(2) == 0)
                {
                    BinaryPrimitives.WriteUInt32LittleEndian(cut.AsSpan(4), (uint)length);
                }
                return cut;
            case 2:
                // A length-like field set to an extreme value.
                uint[] extremes = [0xFFFFFFFF, 0x7FFFFFFF, 0x80000000, 0x00FFFFFF, 0x01000001, 0xFFFFFFFE, 0];
                var position = random.Next(Math.Max(start, 8), Math.Max(Math.Max(start, 8) + 1, bytes.Length - 4));
                if (position + 4 <= bytes.Length)
                {
                    BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(position), extremes[random.Next(extremes.Length)]);
                }
                return bytes;
            case 3:
                // The message size field itself set to an extreme.
                uint[] sizes = [0, 4, 7, 8, 9, 4097, 65537, 0x7FFFFFFF, 0xFFFFFFFF];
                BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(4), sizes[random.Next(sizes.Length)]);
                return bytes;
            default:
                // A run of random bytes.
                var from = random.Next(start, bytes.Length);
                var count = Math.Min(random.Next(1, 16), bytes.Length - from);
                random.NextBytes(bytes.AsSpan(from, count));
                return bytes;
        }
    }

    private static Corpus BuildCorpus(string url, NodeId flow)
    {
        var template = new RawUaClient();
        var requests = new List<IServiceRequest>
        {
            new GetEndpointsRequest { EndpointUrl = url, LocaleIds = ["en"], ProfileUris = [] },
            new CreateSessionRequest { EndpointUrl = url, SessionName = "fuzz", ClientNonce = new byte[32], RequestedSessionTimeout = 10_000 },
            new ActivateSessionRequest
            {
                LocaleIds = ["en"],
                UserIdentityToken = new ExtensionObject(new NodeId(UserNameIdentityToken.EncodingId), ExtensionObjectEncoding.Binary,
                    new UserNameIdentityToken { PolicyId = "username", UserName = "u", Password = [1, 2, 3] }),
            },
            new ReadRequest
            {
                TimestampsToReturn = TimestampsToReturn.Both,
                NodesToRead = [new ReadValueId { NodeId = flow, AttributeId = 13 }, new ReadValueId { NodeId = new NodeId(2255u), AttributeId = 13 }],
            },
            new BrowseRequest { NodesToBrowse = [new BrowseDescription { NodeId = new NodeId(85u), ReferenceTypeId = new NodeId(33u), IncludeSubtypes = true, ResultMask = 63 }] },
            new TranslateBrowsePathsToNodeIdsRequest
            {
                BrowsePaths = [new BrowsePath
                {
                    StartingNode = new NodeId(84u),
                    RelativePath = new RelativePath { Elements = [new RelativePathElement { ReferenceTypeId = new NodeId(33u), TargetName = new QualifiedName("Objects") }] },
                }],
            },
            new CreateMonitoredItemsRequest
            {
                SubscriptionId = 1,
                TimestampsToReturn = TimestampsToReturn.Both,
                ItemsToCreate = [new MonitoredItemCreateRequest
                {
                    ItemToMonitor = new ReadValueId { NodeId = flow, AttributeId = 13 },
                    MonitoringMode = MonitoringMode.Reporting,
                    RequestedParameters = new MonitoringParameters
                    {
                        ClientHandle = 1, SamplingInterval = 100, QueueSize = 5,
                        Filter = new ExtensionObject(new NodeId(DataChangeFilter.EncodingId), ExtensionObjectEncoding.Binary,
                            new DataChangeFilter { Trigger = DataChangeTrigger.StatusValue, DeadbandType = 1, DeadbandValue = 0.5 }),
                    },
                }],
            },
            new PublishRequest { SubscriptionAcknowledgements = [new SubscriptionAcknowledgement { SubscriptionId = 1, SequenceNumber = 1 }] },
            new CreateSubscriptionRequest { RequestedPublishingInterval = 100, RequestedLifetimeCount = 30, RequestedMaxKeepAliveCount = 3, PublishingEnabled = true },
        };
        return new Corpus(
            RawUaClient.Hello(url),
            template.OpenMessage(),
            [.. requests.Select(r => template.MessageChunk(template.EncodeRequest(r)))]);
    }

    private sealed record Corpus(byte[] Hello, byte[] Open, List<byte[]> Requests);

    private sealed class Outcome
    {
        public int Sent { get; set; }

        public int Errors { get; set; }

        /// <summary>Messages sent a second time after one slow answer.</summary>
        public int Retried { get; set; }

        public List<string> Hangs { get; } = [];

        public List<string> UnexpectedStatuses { get; } = [];

        public Outcome Add(Outcome other)
        {
            Sent += other.Sent;
            Errors += other.Errors;
            Retried += other.Retried;
            Hangs.AddRange(other.Hangs);
            UnexpectedStatuses.AddRange(other.UnexpectedStatuses);
            return this;
        }
    }
}
