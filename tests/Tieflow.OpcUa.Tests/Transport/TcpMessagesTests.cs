using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Transport;

public sealed class TcpMessagesTests
{
    [Fact]
    public void Encode_Hello_MatchesDigestGoldenBytes()
    {
        // docs/opcua.md §1.2 [verified against node-opcua]: Hello to opc.tcp://127.0.0.1:4841/sim, 64 KiB buffers, 0/0 limits.
        var hello = new TcpHello(0, 65536, 65536, 0, 0, "opc.tcp://127.0.0.1:4841/sim");
        byte[] expected =
        [
            0x48, 0x45, 0x4c, 0x46, 0x3c, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x01, 0x00, 0x00, 0x00, 0x01, 0x00,
            0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x1c, 0x00, 0x00, 0x00, .. "opc.tcp://127.0.0.1:4841/sim"u8,
        ];
        Assert.Equal(expected, hello.Encode());
    }

    [Fact]
    public void Decode_Acknowledge_DigestGoldenBytes()
    {
        // docs/opcua.md §1.2: node-opcua's answer (mms 16 MiB, mcc 256).
        byte[] bytes = [0x41, 0x43, 0x4b, 0x46, 0x1c, 0, 0, 0, 0, 0, 0, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 1, 0, 0];
        var (type, chunk, size) = TcpFrameReader.ParseHeader(bytes, 4096);
        var ack = TcpAcknowledge.Decode(new TcpFrame(type, chunk, bytes, size));
        Assert.Equal(new TcpAcknowledge(0, 65536, 65536, 16 * 1024 * 1024, 256), ack);
        Assert.Equal(bytes, ack.Encode());
    }

    [Fact]
    public void DecodeHello_UrlOf4096Bytes_BadTcpEndpointUrlInvalid()
    {
        var bytes = new TcpHello(0, 65536, 65536, 0, 0, "opc.tcp://h/" + new string('a', 4084)).Encode();
        var (type, chunk, size) = TcpFrameReader.ParseHeader(bytes, int.MaxValue);
        var ex = Assert.Throws<UaDecodingException>(() => TcpHello.Decode(new TcpFrame(type, chunk, bytes, size)));
        Assert.Equal(StatusCodes.BadTcpEndpointUrlInvalid, ex.Status);
    }

    [Theory]
    [InlineData(65536u, 65536u, 65536u, 65536u)] // docs/opcua.md §1.2 golden exchange: 64 KiB both ways
    [InlineData(8192u, 655360u, 65536u, 8192u)]  // the server may only lower sizes (OPC 10000-6 §7.1.2.4)
    [InlineData(655360u, 8192u, 8192u, 65536u)]
    public void Accept_Hello_BuffersAreTheSmallerOfPeerAndLocal(uint helloReceive, uint helloSend, uint ackReceive, uint ackSend)
    {
        var hello = new TcpHello(0, helloReceive, helloSend, 0, 0, "opc.tcp://h/");

        var ack = TcpAcknowledge.Accept(hello, TransportLimits.Default);

        // Our receive buffer bounds what the peer sends, our send buffer what it receives.
        Assert.Equal(new TcpAcknowledge(0, ackReceive, ackSend, 16 * 1024 * 1024, 256), ack);
    }

    [Theory]
    [InlineData(1024u, 65536u)]
    [InlineData(65536u, 8191u)]
    public void Accept_BufferBelow8192_BadConnectionRejected(uint helloReceive, uint helloSend)
    {
        // OPC 10000-6 §7.1.2.3: at least 8192 bytes; node-opcua answers Bad_ConnectionRejected (docs/opcua.md §3).
        var hello = new TcpHello(0, helloReceive, helloSend, 0, 0, "opc.tcp://h/");

        var ex = Assert.Throws<UaDecodingException>(() => TcpAcknowledge.Accept(hello, TransportLimits.Default));

        Assert.Equal(StatusCodes.BadConnectionRejected, ex.Status);
    }

    [Fact]
    public void Encode_Error_RoundTrips()
    {
        var bytes = new TcpError(StatusCodes.BadTcpMessageTooLarge, "too big").Encode();
        var (type, chunk, size) = TcpFrameReader.ParseHeader(bytes, 4096);
        Assert.Equal(TcpMessageType.Error, type);
        Assert.Equal(new TcpError(StatusCodes.BadTcpMessageTooLarge, "too big"), TcpError.Decode(new TcpFrame(type, chunk, bytes, size)));
    }

    [Theory]
    [InlineData(new byte[] { (byte)'X', (byte)'Y', (byte)'Z', (byte)'F', 8, 0, 0, 0 }, 0x807E0000u)] // unknown type
    [InlineData(new byte[] { (byte)'H', (byte)'E', (byte)'L', (byte)'C', 8, 0, 0, 0 }, 0x807E0000u)] // HEL as intermediate chunk
    [InlineData(new byte[] { (byte)'M', (byte)'S', (byte)'G', (byte)'F', 4, 0, 0, 0 }, 0x80800000u)] // size below the header
    [InlineData(new byte[] { (byte)'M', (byte)'S', (byte)'G', (byte)'F', 0, 0, 0x40, 6 }, 0x80800000u)] // 100 MB
    public void ParseHeader_Invalid_NamedStatus(byte[] header, uint expected)
    {
        var ex = Assert.Throws<UaDecodingException>(() => TcpFrameReader.ParseHeader(header, 65536));
        Assert.Equal(expected, ex.Status.Code);
    }

    [Fact]
    public async Task ReadAsync_TruncatedStream_BadConnectionClosed()
    {
        using var stream = new MemoryStream([(byte)'M', (byte)'S', (byte)'G', (byte)'F', 100, 0, 0, 0, 1, 2]);
        var ex = await Assert.ThrowsAsync<ServiceResultException>(async () => await TcpFrameReader.ReadAsync(stream, 65536, CancellationToken.None));
        Assert.Equal(StatusCodes.BadConnectionClosed, ex.Status);
    }
}
