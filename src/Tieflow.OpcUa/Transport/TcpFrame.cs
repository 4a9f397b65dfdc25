namespace Tieflow.OpcUa.Transport;

/// <summary>One UA TCP message or chunk as received: the whole bytes, header included.</summary>
internal readonly record struct TcpFrame(uint MessageType, byte ChunkType, byte[] Buffer, int Length)
{
    /// <summary>The bytes after the 8-byte common header.</summary>
    public ReadOnlySpan<byte> Body => Buffer.AsSpan(TcpMessageType.HeaderSize, Length - TcpMessageType.HeaderSize);
}
