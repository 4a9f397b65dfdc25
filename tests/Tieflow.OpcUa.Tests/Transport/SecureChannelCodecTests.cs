using System.Buffers.Binary;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Transport;

public sealed class SecureChannelCodecTests
{
    private static TcpFrame Frame(byte[] chunk)
    {
        var (type, c, size) = TcpFrameReader.ParseHeader(chunk, int.MaxValue);
        return new TcpFrame(type, c, chunk, size);
    }

    private static byte[] Body(int length)
    {
        var random = new Random(11);
        var body = new byte[length];
        random.NextBytes(body);
        return body;
    }

    [Theory]
    [InlineData(10)]
    [InlineData(8192 - 24)]
    [InlineData(8192 - 23)]
    [InlineData(30000)]
    public void EncodeChunks_8192Buffer_ChunksFitAndReassemble(int bodyLength)
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { ChannelId = 5, SendTokenId = 1, PeerReceiveBufferSize = 8192 };
        var receiver = new SecureChannelCodec(TransportLimits.Default) { ChannelId = 5 };
        var body = Body(bodyLength);
        var chunks = sender.EncodeChunks(TcpMessageType.Message, 42, body, StatusCodes.BadRequestTooLarge);

        Assert.Equal((bodyLength + 8192 - 24 - 1) / (8192 - 24), chunks.Count);
        ReceivedMessage? message = null;
        for (var i = 0; i < chunks.Count; i++)
        {
            // Headers included, a chunk is at most the peer's receive buffer (docs/opcua.md §5, off-by-one pitfall).
            Assert.True(chunks[i].Length <= 8192);
            Assert.Equal(i == chunks.Count - 1 ? (byte)'F' : (byte)'C', chunks[i][3]);
            Assert.Equal((uint)(i + 1), BinaryPrimitives.ReadUInt32LittleEndian(chunks[i].AsSpan(16)));
            message = receiver.AddChunk(Frame(chunks[i]));
            Assert.Equal(i == chunks.Count - 1, message is not null);
        }

        Assert.Equal(42u, message!.RequestId);
        Assert.Equal(body, message.Body);
    }

    [Fact]
    public void EncodeChunks_OverPeerChunkCount_BadRequestTooLarge()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = 8192, PeerMaxChunkCount = 2 };
        var ex = Assert.Throws<ServiceResultException>(() => sender.EncodeChunks(TcpMessageType.Message, 1, Body(20000), StatusCodes.BadRequestTooLarge));
        Assert.Equal(StatusCodes.BadRequestTooLarge, ex.Status);
    }

    [Fact]
    public void EncodeChunks_OverPeerMessageSize_RefusedWithGivenStatus()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = 8192, PeerMaxMessageSize = 1000 };
        var ex = Assert.Throws<ServiceResultException>(() => sender.EncodeChunks(TcpMessageType.Message, 1, Body(1001), StatusCodes.BadResponseTooLarge));
        Assert.Equal(StatusCodes.BadResponseTooLarge, ex.Status);
    }

    [Fact]
    public void AddChunk_OverLocalChunkCount_FailsThatRequestAndDiscardsRest()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = 8192 };
        var receiver = new SecureChannelCodec(new TransportLimits { MaxChunkCount = 2 });
        var chunks = sender.EncodeChunks(TcpMessageType.Message, 7, Body(30000), StatusCodes.BadRequestTooLarge);
        Assert.Null(receiver.AddChunk(Frame(chunks[0])));
        Assert.Null(receiver.AddChunk(Frame(chunks[1])));
        var failed = receiver.AddChunk(Frame(chunks[2]));
        Assert.Equal(StatusCodes.BadResponseTooLarge, failed!.Status);
        Assert.Null(receiver.AddChunk(Frame(chunks[3])));

        // The channel goes on: the next message is received normally.
        var next = sender.EncodeChunks(TcpMessageType.Message, 8, Body(100), StatusCodes.BadRequestTooLarge);
        Assert.True(receiver.AddChunk(Frame(next[0]))!.IsGood);
    }

    [Fact]
    public void AddChunk_AbortChunk_FailsRequestWithItsStatus()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = 8192 };
        var receiver = new SecureChannelCodec(TransportLimits.Default);
        var chunks = sender.EncodeChunks(TcpMessageType.Message, 3, Body(10000), StatusCodes.BadRequestTooLarge);
        Assert.Null(receiver.AddChunk(Frame(chunks[0])));

        var w = new UaBinaryWriter();
        w.WriteStatusCode(StatusCodes.BadResponseTooLarge);
        w.WriteString("stop");
        sender.SetLastSentSequenceNumber(1); // the abort replaces the second chunk
        var abort = sender.EncodeChunks(TcpMessageType.Message, 3, w.ToArray(), StatusCodes.BadRequestTooLarge)[0];
        abort[3] = (byte)'A';
        var message = receiver.AddChunk(Frame(abort));
        Assert.Equal(StatusCodes.BadResponseTooLarge, message!.Status);
        Assert.Equal("stop", message.Reason);
    }

    [Fact]
    public void AddChunk_SequenceGap_BadSequenceNumberInvalid()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default);
        var receiver = new SecureChannelCodec(TransportLimits.Default);
        receiver.AddChunk(Frame(sender.EncodeChunks(TcpMessageType.Message, 1, Body(10), StatusCodes.BadRequestTooLarge)[0]));
        sender.EncodeChunks(TcpMessageType.Message, 2, Body(10), StatusCodes.BadRequestTooLarge);
        var third = sender.EncodeChunks(TcpMessageType.Message, 3, Body(10), StatusCodes.BadRequestTooLarge)[0];
        var ex = Assert.Throws<UaDecodingException>(() => receiver.AddChunk(Frame(third)));
        Assert.Equal(StatusCodes.BadSequenceNumberInvalid, ex.Status);
    }

    [Fact]
    public void AddChunk_UnknownToken_BadSecureChannelTokenUnknown()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { SendTokenId = 9 };
        var receiver = new SecureChannelCodec(TransportLimits.Default) { IsTokenAccepted = t => t == 1 };
        var ex = Assert.Throws<UaDecodingException>(() => receiver.AddChunk(Frame(sender.EncodeChunks(TcpMessageType.Message, 1, Body(10), StatusCodes.BadRequestTooLarge)[0])));
        Assert.Equal(StatusCodes.BadSecureChannelTokenUnknown, ex.Status);
    }

    [Fact]
    public void AddChunk_OtherChannel_BadTcpSecureChannelUnknown()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { ChannelId = 2 };
        var receiver = new SecureChannelCodec(TransportLimits.Default) { ChannelId = 3 };
        var ex = Assert.Throws<UaDecodingException>(() => receiver.AddChunk(Frame(sender.EncodeChunks(TcpMessageType.Message, 1, Body(10), StatusCodes.BadRequestTooLarge)[0])));
        Assert.Equal(StatusCodes.BadTcpSecureChannelUnknown, ex.Status);
    }

    [Fact]
    public void AddChunk_OpnWithOtherPolicy_BadSecurityPolicyRejected()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default);
        var chunk = sender.EncodeChunks(TcpMessageType.OpenSecureChannel, 1, Body(10), StatusCodes.BadRequestTooLarge)[0];
        chunk[12 + 4 + 40] = (byte)'X'; // a letter inside "...SecurityPolicy#None"
        var ex = Assert.Throws<UaDecodingException>(() => new SecureChannelCodec(TransportLimits.Default).AddChunk(Frame(chunk)));
        Assert.Equal(StatusCodes.BadSecurityPolicyRejected, ex.Status);
    }

    [Fact]
    public void EncodeChunks_OpnAsymmetricHeader_NullCertificates()
    {
        // docs/opcua.md §1.3: SecurityPolicyUri, then SenderCertificate and ReceiverCertificateThumbprint both null (-1) under None.
        var chunk = new SecureChannelCodec(TransportLimits.Default).EncodeChunks(TcpMessageType.OpenSecureChannel, 1, Body(4), StatusCodes.BadRequestTooLarge)[0];
        Assert.Equal("OPNF"u8.ToArray(), chunk[..4]);
        Assert.Equal(0u, BinaryPrimitives.ReadUInt32LittleEndian(chunk.AsSpan(8)));
        var uriLength = BinaryPrimitives.ReadInt32LittleEndian(chunk.AsSpan(12));
        Assert.Equal(SecureChannelCodec.SecurityPolicyNoneUri, System.Text.Encoding.UTF8.GetString(chunk, 16, uriLength));
        Assert.Equal(-1, BinaryPrimitives.ReadInt32LittleEndian(chunk.AsSpan(16 + uriLength)));
        Assert.Equal(-1, BinaryPrimitives.ReadInt32LittleEndian(chunk.AsSpan(20 + uriLength)));
    }

    [Theory]
    [InlineData(1u, 2u)]
    [InlineData(4294966270u, 4294966271u)]
    [InlineData(4294966271u, 1u)] // legacy wrap after 4 294 966 271 to a value below 1024 (OPC 10000-6 §6.7.2.4)
    public void NextSequenceNumber_LegacyRule(uint last, uint next)
    {
        Assert.Equal(next, SecureChannelCodec.NextSequenceNumber(last));
        Assert.True(SecureChannelCodec.IsNextSequenceNumber(last, next));
    }

    [Fact]
    public void AddChunk_AcrossWrap_Accepted()
    {
        var sender = new SecureChannelCodec(TransportLimits.Default);
        var receiver = new SecureChannelCodec(TransportLimits.Default);
        sender.SetLastSentSequenceNumber(4294966270u);
        for (var i = 0; i < 3; i++)
        {
            Assert.NotNull(receiver.AddChunk(Frame(sender.EncodeChunks(TcpMessageType.Message, (uint)i, Body(10), StatusCodes.BadRequestTooLarge)[0])));
        }

        Assert.Equal(2u, sender.LastSentSequenceNumber);
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void AddChunk_SecondRequestWhileOneIsReassembled_RefusedOnlyWhenInterleavingIsOff(bool allowed)
    {
        var sender = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = 8192 };
        var receiver = new SecureChannelCodec(TransportLimits.Default) { InterleavedMessagesAllowed = allowed };
        var first = sender.EncodeChunks(TcpMessageType.Message, 1, Body(10000), StatusCodes.BadRequestTooLarge);
        // The second message's chunk follows the first chunk of the first in sequence (number 2).
        var interleaving = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = 8192 };
        interleaving.SetLastSentSequenceNumber(1);
        var second = interleaving.EncodeChunks(TcpMessageType.Message, 2, Body(100), StatusCodes.BadRequestTooLarge)[0];
        Assert.Null(receiver.AddChunk(Frame(first[0])));

        if (allowed)
        {
            Assert.Equal(2u, receiver.AddChunk(Frame(second))!.RequestId);
        }
        else
        {
            var ex = Assert.Throws<UaDecodingException>(() => receiver.AddChunk(Frame(second)));
            Assert.Equal(StatusCodes.BadTcpMessageTypeInvalid, ex.Status);
        }
    }
}
