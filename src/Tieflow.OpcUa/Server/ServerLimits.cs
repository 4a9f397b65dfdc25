using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>Transport and decoder limits of the server (project OPC UA digest §3).</summary>
internal sealed class ServerLimits
{
    public int ReceiveBufferSize { get; init; } = 65536;

    public int SendBufferSize { get; init; } = 65536;

    public int MaxMessageSize { get; init; } = 16 * 1024 * 1024;

    public int MaxChunkCount { get; init; } = 256;

    public EncodingLimits Encoding { get; init; } = EncodingLimits.Default;
}
