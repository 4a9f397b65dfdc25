using System.Buffers.Binary;
using System.Security.Cryptography;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Security;

/// <summary>
/// Chunk protection under each policy and mode between a client and a server codec: round trips (with multi-chunk
/// messages and the extra padding byte of keys over 2048 bits), and tampered signatures, wrong padding, replayed
/// sequence numbers and expired tokens rejected with a status, never a crash.
/// </summary>
public sealed class ChannelSecurityTests
{
    private static readonly byte[] ClientNonce = [.. Enumerable.Range(1, 32).Select(i => (byte)i)];
    private static readonly byte[] ServerNonce = [.. Enumerable.Range(101, 32).Select(i => (byte)i)];

    public static TheoryData<string> AllSecured() => [.. UaSecurity.AllSecure.Select(s => s.ToString())];

    private static TcpFrame Frame(byte[] chunk)
    {
        var (type, c, size) = TcpFrameReader.ParseHeader(chunk, int.MaxValue);
        return new TcpFrame(type, c, chunk, size);
    }

    private static (SecureChannelCodec Client, SecureChannelCodec Server, ChannelSecurity ClientSecurity, ChannelSecurity ServerSecurity) Pair(
        string security, bool largeServer = false)
    {
        var choice = UaSecurity.Parse(security);
        var policy = SecurityPolicy.FromUri(choice.PolicyUri)!;
        var server = largeServer ? TestCertificates.LargeServer : TestCertificates.Server;
        var clientSecurity = ChannelSecurity.ForClient(policy, choice.Mode, TestCertificates.Client, TestCertificates.Public(server));
        var serverSecurity = ChannelSecurity.ForServer(server);
        serverSecurity.SetPolicy(policy, TestCertificates.Public(TestCertificates.Client));
        serverSecurity.Mode = choice.Mode;
        clientSecurity.AddToken(1, ClientNonce, ServerNonce);
        serverSecurity.AddToken(1, ClientNonce, ServerNonce);
        var limits = new TransportLimits();
        var client = new SecureChannelCodec(limits) { Security = clientSecurity, ChannelId = 7, SendTokenId = 1, PeerReceiveBufferSize = 8192 };
        var serverCodec = new SecureChannelCodec(limits) { Security = serverSecurity, ChannelId = 7, SendTokenId = 1, PeerReceiveBufferSize = 8192 };
        serverCodec.AsymmetricHeaderCheck = (_, _, thumbprint) => Assert.True(serverSecurity.IsLocalThumbprint(thumbprint));
        return (client, serverCodec, clientSecurity, serverSecurity);
    }

    private static byte[] Body(int length, int seed)
    {
        var body = new byte[length];
        new Random(seed).NextBytes(body);
        return body;
    }

    [Theory]
    [MemberData(nameof(AllSecured))]
    public void Message_RoundTrips_InOneAndInManyChunks(string security)
    {
        var (client, server, _, _) = Pair(security);
        foreach (var length in new[] { 0, 1, 15, 16, 17, 8000, 50_000 })
        {
            var body = Body(length, length);
            var chunks = client.EncodeChunks(TcpMessageType.Message, 9, body, StatusCodes.BadRequestTooLarge);
            Assert.All(chunks, c => Assert.True(c.Length <= 8192));
            ReceivedMessage? received = null;
            foreach (var chunk in chunks)
            {
                received = server.AddChunk(Frame(chunk));
            }

            Assert.NotNull(received);
            Assert.Equal(body, received.Body);
        }
    }

    [Theory]
    [InlineData("SignAndEncrypt:Basic256Sha256", false)]
    [InlineData("Sign:Aes256_Sha256_RsaPss", false)]
    [InlineData("SignAndEncrypt:Aes128_Sha256_RsaOaep", true)]
    [InlineData("SignAndEncrypt:Aes256_Sha256_RsaPss", true)]
    public void OpenSecureChannel_RoundTripsAsymmetrically_AlsoWithTheExtraPaddingByte(string security, bool largeServer)
    {
        var (client, server, _, _) = Pair(security, largeServer);
        foreach (var length in new[] { 60, 129, 1000, 12_000 })
        {
            var body = Body(length, length);
            var chunks = client.EncodeChunks(TcpMessageType.OpenSecureChannel, 1, body, StatusCodes.BadRequestTooLarge);
            ReceivedMessage? received = null;
            foreach (var chunk in chunks)
            {
                // The sender's certificate travels in clear in the security header.
                Assert.True(chunk.AsSpan().IndexOf(TestCertificates.Client.RawData) > 0);
                Assert.True(chunk.Length <= 8192);
                received = server.AddChunk(Frame(chunk));
            }

            Assert.Equal(body, received!.Body);
        }
    }

    [Theory]
    [MemberData(nameof(AllSecured))]
    public void TamperedChunk_IsRejectedWithBadSecurityChecksFailed(string security)
    {
        var (client, server, _, _) = Pair(security);
        var chunk = client.EncodeChunks(TcpMessageType.Message, 9, Body(300, 3), StatusCodes.BadRequestTooLarge).Single();
        chunk[SecureChannelCodec.SymmetricHeaderSize + 20] ^= 0x01;
        var error = Assert.Throws<UaDecodingException>(() => server.AddChunk(Frame(chunk)));
        Assert.Equal(StatusCodes.BadSecurityChecksFailed, error.Status);

        var (client2, server2, _, _) = Pair(security);
        var opn = client2.EncodeChunks(TcpMessageType.OpenSecureChannel, 1, Body(100, 4), StatusCodes.BadRequestTooLarge).Single();
        opn[^5] ^= 0x80;
        Assert.Equal(StatusCodes.BadSecurityChecksFailed, Assert.Throws<UaDecodingException>(() => server2.AddChunk(Frame(opn))).Status);
    }

    [Theory]
    [InlineData("SignAndEncrypt:Basic256Sha256")]
    [InlineData("SignAndEncrypt:Aes128_Sha256_RsaOaep")]
    [InlineData("SignAndEncrypt:Aes256_Sha256_RsaPss")]
    public void WrongPadding_UnderAValidSignature_IsRejected(string security)
    {
        var (_, server, _, _) = Pair(security);
        var policy = SecurityPolicy.FromUri(UaSecurity.Parse(security).PolicyUri)!;
        // The client's keys as the client derives them (secret = server nonce, seed = client nonce).
        var keys = SymmetricKeys.Derive(policy, ServerNonce, ClientNonce);
        // 8 sequence bytes + 7 body bytes + padding size byte (3) + 3 padding bytes with a wrong last value + 32 signature = 53 -> 64 with 11 padding
        var plain = new byte[8 + 7 + 1 + 16 + 32];
        BinaryPrimitives.WriteUInt32LittleEndian(plain, 1);
        BinaryPrimitives.WriteUInt32LittleEndian(plain.AsSpan(4), 9);
        var padding = plain.Length - 32 - 8 - 7 - 1;
        plain.AsSpan(15, padding + 1).Fill((byte)padding);
        plain[15 + padding - 1] = (byte)(padding - 1);
        var chunk = new byte[16 + plain.Length];
        BinaryPrimitives.WriteUInt32LittleEndian(chunk, TcpMessageType.Message | ((uint)TcpMessageType.Final << 24));
        BinaryPrimitives.WriteInt32LittleEndian(chunk.AsSpan(4), chunk.Length);
        BinaryPrimitives.WriteUInt32LittleEndian(chunk.AsSpan(8), 7);
        BinaryPrimitives.WriteUInt32LittleEndian(chunk.AsSpan(12), 1);
        plain.CopyTo(chunk, 16);
        keys.Sign(chunk.AsSpan(0, chunk.Length - 32), chunk.AsSpan(chunk.Length - 32));
        keys.Encrypt(chunk.AsSpan(16), chunk.AsSpan(16));

        var error = Assert.Throws<UaDecodingException>(() => server.AddChunk(Frame(chunk)));
        Assert.Equal(StatusCodes.BadSecurityChecksFailed, error.Status);
        Assert.Contains("padding", error.Message, StringComparison.Ordinal);
    }

    [Theory]
    [MemberData(nameof(AllSecured))]
    public void ReplayedChunk_IsRejectedForItsSequenceNumber(string security)
    {
        var (client, server, _, _) = Pair(security);
        var chunk = client.EncodeChunks(TcpMessageType.Message, 9, Body(40, 5), StatusCodes.BadRequestTooLarge).Single();
        var copy = chunk.ToArray();
        Assert.NotNull(server.AddChunk(Frame(chunk)));
        var error = Assert.Throws<UaDecodingException>(() => server.AddChunk(Frame(copy)));
        Assert.Equal(StatusCodes.BadSequenceNumberInvalid, error.Status);
    }

    [Fact]
    public void ChunkUnderAnExpiredToken_IsRejected()
    {
        var (client, server, _, serverSecurity) = Pair("SignAndEncrypt:Basic256Sha256");
        var chunk = client.EncodeChunks(TcpMessageType.Message, 9, Body(40, 6), StatusCodes.BadRequestTooLarge).Single();
        server.IsTokenAccepted = id => id != 1;
        serverSecurity.PruneTokens(server.IsTokenAccepted);
        Assert.Equal(StatusCodes.BadSecureChannelTokenUnknown, Assert.Throws<UaDecodingException>(() => server.AddChunk(Frame(chunk))).Status);
    }

    [Fact]
    public void ChunkForAnotherServerCertificate_IsRejectedBeforeDecryption()
    {
        var (client, _, _, _) = Pair("SignAndEncrypt:Basic256Sha256");
        var opn = client.EncodeChunks(TcpMessageType.OpenSecureChannel, 1, Body(100, 7), StatusCodes.BadRequestTooLarge).Single();
        var other = ChannelSecurity.ForServer(TestCertificates.LargeServer);
        Assert.False(other.IsLocalThumbprint(SHA1.HashData(TestCertificates.Server.RawData)));
        var codec = new SecureChannelCodec(new TransportLimits())
        {
            Security = ChannelSecurity.ForClient(SecurityPolicy.Basic256Sha256, MessageSecurityMode.SignAndEncrypt, TestCertificates.LargeServer, TestCertificates.Public(TestCertificates.Client)),
            ChannelId = 7,
        };
        Assert.Equal(StatusCodes.BadCertificateInvalid, Assert.Throws<UaDecodingException>(() => codec.AddChunk(Frame(opn))).Status);
    }

    [Fact]
    public void KeyDerivation_MatchesRfc5246PrfVector()
    {
        // P_SHA256 test vector (from memory: the widely circulated TLS 1.2 PRF SHA-256 vector; secret, "test label" + seed, 100 bytes).
        var secret = Convert.FromHexString("9bbe436ba940f017b17652849a71db35");
        var seed = Convert.FromHexString("74657374206c6162656c" + "a0ba9f936cda311827a6f796ffd5198c");
        var output = new byte[100];
        PSha256.Derive(secret, seed, output);
        Assert.Equal("e3f229ba727be17b8d122620557cd453c2aab21d07c3d495329b52d4e61edb5a6b301791e90d35c9c9a46b4e14baf9af0fa022f7077def17abfd3797c0564bab4fbc91666e9def9b97fce34f796789baa48082d122ee42c5a72e5a5110fff70187347b66",
            Convert.ToHexStringLower(output));
    }
}
