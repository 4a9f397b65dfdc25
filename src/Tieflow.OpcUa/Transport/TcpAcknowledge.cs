using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>The Acknowledge message (OPC 10000-6 §7.1.2.4).</summary>
internal sealed record TcpAcknowledge(uint ProtocolVersion, uint ReceiveBufferSize, uint SendBufferSize, uint MaxMessageSize, uint MaxChunkCount)
{
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
