using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Server;

/// <summary>Transport and decoder limits of the server (docs/opcua.md §3).</summary>
internal sealed class ServerLimits
{
    /// <summary>Buffer sizes, MaxMessageSize and MaxChunkCount announced in the Acknowledge and enforced on receipt.</summary>
    public TransportLimits Transport { get; init; } = TransportLimits.Default;

    public EncodingLimits Encoding { get; init; } = EncodingLimits.Default;
}
