using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>The Acknowledge message (OPC 10000-6 §7.1.2.4).</summary>
internal sealed record TcpAcknowledge(uint ProtocolVersion, uint ReceiveBufferSize, uint SendBufferSize, uint MaxMessageSize, uint MaxChunkCount)
{
    /// <summary>Smallest ReceiveBufferSize / SendBufferSize a Hello may announce (OPC 10000-6 §7.1.2.3, RSA and None policies).</summary>
    public const uint MinBufferSize = 8192;

    /// <summary>
    /// The server's answer to a Hello: the buffer sizes are the smaller of the peer's and the local ones (a server may
    /// only lower them), MaxMessageSize and MaxChunkCount are the local limits.
    /// </summary>
    /// <exception cref="UaDecodingException">BadConnectionRejected: a buffer in the Hello is below 8192 bytes (as node-opcua answers, docs/opcua.md §3).</exception>
    public static TcpAcknowledge Accept(TcpHello hello, TransportLimits local)
    {
        if (hello.ReceiveBufferSize < MinBufferSize || hello.SendBufferSize < MinBufferSize)
        {
            throw new UaDecodingException(StatusCodes.BadConnectionRejected,
                $"Hello buffer sizes {hello.ReceiveBufferSize}/{hello.SendBufferSize} are below the minimum of {MinBufferSize} bytes");
        }

        return new TcpAcknowledge(
            0,
            Math.Min(hello.SendBufferSize, (uint)local.ReceiveBufferSize),
            Math.Min(hello.ReceiveBufferSize, (uint)local.SendBufferSize),
            (uint)local.MaxMessageSize,
            (uint)local.MaxChunkCount);
    }

    public byte[] Encode()
    {
        var w = new UaBinaryWriter(28);
        w.WriteUInt32(TcpMessageType.Acknowledge | ((uint)TcpMessageType.Final << 24));
        w.WriteUInt32(28);
        w.WriteUInt32(ProtocolVersion);
        w.WriteUInt32(ReceiveBufferSize);
        w.WriteUInt32(SendBufferSize);
        w.WriteUInt32(MaxMessageSize);
        w.WriteUInt32(MaxChunkCount);
        return w.ToArray();
    }

    public static TcpAcknowledge Decode(TcpFrame frame)
    {
        var r = new UaBinaryReader(frame.Buffer, TcpMessageType.HeaderSize, frame.Length - TcpMessageType.HeaderSize);
        return new TcpAcknowledge(r.ReadUInt32(), r.ReadUInt32(), r.ReadUInt32(), r.ReadUInt32(), r.ReadUInt32());
    }
}
