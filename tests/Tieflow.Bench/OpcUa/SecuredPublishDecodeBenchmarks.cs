using BenchmarkDotNet.Attributes;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Transport;

namespace Tieflow.Bench.OpcUa;

/// <summary>
/// Receiving Publish responses under SignAndEncrypt (target: at least 2 000 000 notifications per second on one
/// core): each chunk is checked by the client's secure channel codec (HMAC-SHA256, AES-CBC decryption, padding,
/// sequence number) and the body decoded. Each operation is one notification: the mean is the time per notification.
/// </summary>
[MemoryDiagnoser]
public class SecuredPublishDecodeBenchmarks
{
    private readonly List<byte[]> _chunks = [];
    private ChannelSecurity _clientSecurity = null!;
    private string _pki = string.Empty;

    /// <summary>The security policy.</summary>
    [Params("Basic256Sha256", "Aes128_Sha256_RsaOaep", "Aes256_Sha256_RsaPss")]
    public string Policy { get; set; } = "Basic256Sha256";

    /// <summary>Notifications per Publish response.</summary>
    [Params(50, 1000)]
    public int NotificationsPerResponse { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _pki = Path.Combine(Path.GetTempPath(), "tieflow-bench-" + Guid.NewGuid().ToString("N"));
        using var clientCertificate = new UaCertificateStore(Path.Combine(_pki, "client")).GetOrCreateApplicationCertificate("urn:bench:client", "Bench client", ["localhost"]);
        using var serverCertificate = new UaCertificateStore(Path.Combine(_pki, "server")).GetOrCreateApplicationCertificate("urn:bench:server", "Bench server", ["localhost"]);
        var policy = SecurityPolicy.FromName(Policy)!;
        byte[] clientNonce = [.. Enumerable.Range(1, 32).Select(i => (byte)i)];
        byte[] serverNonce = [.. Enumerable.Range(50, 32).Select(i => (byte)i)];
        _clientSecurity = ChannelSecurity.ForClient(policy, MessageSecurityMode.SignAndEncrypt, clientCertificate, serverCertificate);
        _clientSecurity.AddToken(1, clientNonce, serverNonce);
        var serverSecurity = ChannelSecurity.ForServer(serverCertificate);
        serverSecurity.SetPolicy(policy, clientCertificate);
        serverSecurity.Mode = MessageSecurityMode.SignAndEncrypt;
        serverSecurity.AddToken(1, clientNonce, serverNonce);
        var server = new SecureChannelCodec(TransportLimits.Default) { Security = serverSecurity, ChannelId = 3, SendTokenId = 1, PeerReceiveBufferSize = 65536 };

        var t0 = new DateTime(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);
        var items = new MonitoredItemNotification[NotificationsPerResponse];
        for (var i = 0; i < items.Length; i++)
        {
            items[i] = new MonitoredItemNotification
            {
                ClientHandle = (uint)i + 1,
                Value = new DataValue
                {
                    Value = Variant.From(20.0 + (i * 0.01)),
                    Status = i % 10 == 0 ? StatusCodes.UncertainLastUsableValue : StatusCodes.Good,
                    SourceTimestamp = t0.AddMilliseconds(i),
                    ServerTimestamp = t0.AddMilliseconds(i + 1),
                },
            };
        }

        var response = new PublishResponse
        {
            SubscriptionId = 1,
            AvailableSequenceNumbers = [7],
            NotificationMessage = new NotificationMessage
            {
                SequenceNumber = 7,
                PublishTime = t0,
                NotificationData = [new ExtensionObject(new NodeId(DataChangeNotification.EncodingId), ExtensionObjectEncoding.Binary, new DataChangeNotification { MonitoredItems = items })],
            },
        };
        var body = MessageCodec.Encode(response);
        for (var i = 0; i < 1000 / NotificationsPerResponse; i++)
        {
            _chunks.AddRange(server.EncodeChunks(TcpMessageType.Message, (uint)i + 1, body, StatusCodes.BadResponseTooLarge));
        }
    }

    [GlobalCleanup]
    public void Cleanup() => Directory.Delete(_pki, recursive: true);

    /// <summary>Receives 1000 notifications' worth of secured chunks per invocation, so that the mean is per notification.</summary>
    [Benchmark(OperationsPerInvoke = 1000)]
    public int ReceiveSecuredPublishResponses()
    {
        // A fresh codec per round: the chunks' sequence numbers start again at 1.
        var client = new SecureChannelCodec(TransportLimits.Default) { Security = _clientSecurity, ChannelId = 3 };
        var total = 0;
        foreach (var chunk in _chunks)
        {
            // Decryption is in place, as on the receive path, where every frame has its own buffer.
            var buffer = chunk.ToArray();
            var message = client.AddChunk(new TcpFrame(TcpMessageType.Message, TcpMessageType.Final, buffer, buffer.Length));
            if (message is not null)
            {
                var decoded = (PublishResponse)MessageCodec.Decode(message.Body);
                total += ((DataChangeNotification)decoded.NotificationMessage.NotificationData[0].Body!).MonitoredItems.Length;
            }
        }

        return total;
    }
}
