using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>The Hello message (OPC 10000-6 §7.1.2.3).</summary>
internal sealed record TcpHello(uint ProtocolVersion, uint ReceiveBufferSize, uint SendBufferSize, uint MaxMessageSize, uint MaxChunkCount, string EndpointUrl)
{
    /// <summary>Largest EndpointUrl in bytes (exclusive upper bound 4096, docs/opcua.md §1.2).</summary>
    public const int MaxEndpointUrlLength = 4095;

    public byte[] Encode()
    {
        var w = new UaBinaryWriter(64 + EndpointUrl.Length);
        w.WriteUInt32(TcpMessageType.Hello | ((uint)TcpMessageType.Final << 24));
        w.WriteUInt32(0);
        w.WriteUInt32(ProtocolVersion);
        w.WriteUInt32(ReceiveBufferSize);
        w.WriteUInt32(SendBufferSize);
        w.WriteUInt32(MaxMessageSize);
        w.WriteUInt32(MaxChunkCount);
        w.WriteString(EndpointUrl);
        w.PatchInt32(4, w.Position);
        return w.ToArray();
    }

    /// <summary>Decodes the body of a HEL frame; a URL of 4096 bytes or more is BadTcpEndpointUrlInvalid.</summary>
    public static TcpHello Decode(TcpFrame frame)
    {
        var r = new UaBinaryReader(frame.Buffer, TcpMessageType.HeaderSize, frame.Length - TcpMessageType.HeaderSize,
            new EncodingLimits { MaxStringLength = MaxEndpointUrlLength });
        var version = r.ReadUInt32();
        var receive = r.ReadUInt32();
        var send = r.ReadUInt32();
        var maxMessage = r.ReadUInt32();
        var maxChunks = r.ReadUInt32();
        string? url;
        try
        {
            url = r.ReadString();
        }
        catch (UaDecodingException ex) when (ex.Status == StatusCodes.BadEncodingLimitsExceeded)
        {
            throw new UaDecodingException(StatusCodes.BadTcpEndpointUrlInvalid, "Hello EndpointUrl is 4096 bytes or longer");
        }

        return new TcpHello(version, receive, send, maxMessage, maxChunks, url ?? string.Empty);
    }
}
