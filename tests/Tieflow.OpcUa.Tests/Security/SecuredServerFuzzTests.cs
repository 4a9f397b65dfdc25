using System.Buffers.Binary;
using System.Net.Sockets;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Server;
using Tieflow.OpcUa.Tests.Server;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Security;

/// <summary>
/// Seeded fuzzing of a secured server's OpenSecureChannel: a correctly signed and encrypted OPN (every policy) is
/// mutated (bit flips, truncations, extreme length fields, random runs) and sent on fresh connections. Each must be
/// answered or closed within a second, refused only with a named security or decoding status (never the internal
/// error that marks a defect), and the server must still open secured channels afterwards.
/// </summary>
public sealed class SecuredServerFuzzTests
{
    private const int Messages = 600;
    private static readonly TimeSpan PerMessage = TimeSpan.FromSeconds(1);

    private static readonly HashSet<uint> NamedStatuses =
    [
        StatusCodes.BadTcpMessageTooLarge.Code, StatusCodes.BadTcpMessageTypeInvalid.Code, StatusCodes.BadDecodingError.Code,
        StatusCodes.BadEncodingLimitsExceeded.Code, StatusCodes.BadSecurityPolicyRejected.Code, StatusCodes.BadSecurityModeRejected.Code,
        StatusCodes.BadTcpSecureChannelUnknown.Code, StatusCodes.BadSecurityChecksFailed.Code, StatusCodes.BadCertificateInvalid.Code,
        StatusCodes.BadNonceInvalid.Code, StatusCodes.BadCertificateTimeInvalid.Code, StatusCodes.BadSequenceNumberInvalid.Code,
    ];

    [Fact]
    public async Task SecuredServer_MutatedOpenSecureChannel_IsRefusedWithNamedStatusesAndNeverHangs()
    {
        await using var server = new UaServer(new UaServerOptions
        {
            ResourcePath = "/sim",
            Security = new UaServerSecurityOptions { Certificate = TestCertificates.Server, AcceptAnyClientCertificate = true },
        });
        await server.StartAsync();
        var url = server.EndpointUrl;
        var originals = SecurityPolicy.All.Select(p => SecuredOpen(p)).ToList();

        // Unmutated, each is answered with an OPN response.
        foreach (var open in originals)
        {
            var (status, answered, first, _) = await SendAsync(server.Port, url, open);
            Assert.True(answered);
            Assert.Null(status);
            Assert.Equal((byte)'O', first);
        }

        var random = new Random(20261202);
        var unexpected = new List<string>();
        var hangs = new List<string>();
        for (var i = 0; i < Messages; i++)
        {
            var mutated = Mutate(originals[i % originals.Count], random);
            var started = TimeProvider.System.GetTimestamp();
            var (status, answered, _, reason) = await SendAsync(server.Port, url, mutated);
            var elapsed = TimeProvider.System.GetElapsedTime(started);
            if (!answered || elapsed > PerMessage + TimeSpan.FromSeconds(4))
            {
                hangs.Add($"message {i}: {elapsed.TotalMilliseconds:F0} ms");
            }
            if (status is { } s && !NamedStatuses.Contains(s))
            {
                unexpected.Add($"message {i}: {new StatusCode(s)} {reason}");
            }
        }

        Assert.True(hangs.Count == 0, string.Join("; ", hangs.Take(5)));
        Assert.True(unexpected.Count == 0, string.Join("; ", unexpected.Take(5)));
        var after = await SendAsync(server.Port, url, originals[0]);
        Assert.Equal((byte)'O', after.First);
    }

    private static byte[] SecuredOpen(SecurityPolicy policy)
    {
        var security = ChannelSecurity.ForClient(policy, MessageSecurityMode.SignAndEncrypt, TestCertificates.Client, TestCertificates.Public(TestCertificates.Server));
        var codec = new SecureChannelCodec(new TransportLimits()) { Security = security, PeerReceiveBufferSize = 65536 };
        var request = new OpenSecureChannelRequest
        {
            RequestHeader = new RequestHeader { RequestHandle = 1, TimeoutHint = 10_000 },
            RequestType = SecurityTokenRequestType.Issue,
            SecurityMode = MessageSecurityMode.SignAndEncrypt,
            ClientNonce = new byte[32],
            RequestedLifetime = 60_000,
        };
        return codec.EncodeChunks(TcpMessageType.OpenSecureChannel, 1, MessageCodec.Encode(request), StatusCodes.BadRequestTooLarge).Single();
    }

    private static async Task<(uint? Status, bool Answered, byte First, string? Reason)> SendAsync(int port, string url, byte[] open)
    {
        using var client = new RawUaClient { Timeout = TimeSpan.FromSeconds(5) };
        await client.ConnectAsync(port);
        await client.HelloAsync(url);
        uint? status = null;
        byte first = 0;
        try
        {
            await client.SendRawAsync(open);
            using var cts = new CancellationTokenSource(PerMessage + TimeSpan.FromSeconds(4));
            var header = new byte[8];
            await client.Stream.ReadExactlyAsync(header, cts.Token);
            first = header[0];
            var body = new byte[Math.Clamp((int)BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(4)) - 8, 0, 1 << 20)];
            await client.Stream.ReadExactlyAsync(body, cts.Token);
            string? reason = null;
            if (header[0] == (byte)'E' && body.Length >= 8)
            {
                status = BinaryPrimitives.ReadUInt32LittleEndian(body);
                reason = System.Text.Encoding.UTF8.GetString(body, 8, Math.Max(0, body.Length - 8));
            }
            return (status, true, first, reason);
        }
        catch (OperationCanceledException)
        {
            return (status, false, first, null);
        }
        catch (Exception e) when (e is IOException or SocketException or EndOfStreamException)
        {
            // Closed without an answer counts as refused.
            return (status, true, first, null);
        }
    }

    private static byte[] Mutate(byte[] original, Random random)
    {
        var bytes = (byte[])original.Clone();
        switch (random.Next(4))
        {
            case 0:
                for (var k = random.Next(1, 5); k > 0; k--)
                {
                    bytes[random.Next(8, bytes.Length)] ^= (byte)(1 << random.Next(8));
                }
                return bytes;
            case 1:
                var length = random.Next(12, bytes.Length);
                var cut = bytes.AsSpan(0, length).ToArray();
                BinaryPrimitives.WriteUInt32LittleEndian(cut.AsSpan(4), (uint)length);
                return cut;
            case 2:
                uint[] extremes = [0xFFFFFFFF, 0x7FFFFFFF, 0x80000000, 0x00FFFFFF, 0];
                // The policy URI, certificate and thumbprint lengths sit in the first hundred bytes.
                var position = random.Next(12, Math.Min(bytes.Length - 4, 120));
                BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(position), extremes[random.Next(extremes.Length)]);
                return bytes;
            default:
                var from = random.Next(8, bytes.Length);
                random.NextBytes(bytes.AsSpan(from, Math.Min(random.Next(1, 32), bytes.Length - from)));
                return bytes;
        }
    }
}
