using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>The Error message (OPC 10000-6 §7.1.2.5); also the body of an abort chunk (§6.7.3).</summary>
internal sealed record TcpError(StatusCode Error, string? Reason)
{
    public byte[] Encode()
    {
        var w = new UaBinaryWriter(32);
        w.WriteUInt32(TcpMessageType.Error | ((uint)TcpMessageType.Final << 24));
        w.WriteUInt32(0);
        w.WriteStatusCode(Error);
        w.WriteString(Reason);
        w.PatchInt32(4, w.Position);
        return w.ToArray();
    }

    public static TcpError Decode(TcpFrame frame) => Decode(frame.Buffer, TcpMessageType.HeaderSize, frame.Length - TcpMessageType.HeaderSize);

    public static TcpError Decode(byte[] buffer, int offset, int count)
    {
        var r = new UaBinaryReader(buffer, offset, count, new EncodingLimits { MaxStringLength = 4096 });
        return new TcpError(r.ReadStatusCode(), r.ReadString());
    }
}
