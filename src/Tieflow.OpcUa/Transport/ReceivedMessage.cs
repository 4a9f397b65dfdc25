using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>
/// A message reassembled from its chunks. When <see cref="Status"/> is Bad the message was aborted by the peer
/// ('A' chunk, <see cref="Reason"/> set) or dropped for exceeding a limit, and <see cref="Body"/> is empty: only
/// the request with <see cref="RequestId"/> fails.
/// </summary>
internal sealed record ReceivedMessage(uint MessageType, uint RequestId, uint TokenId, byte[] Body, StatusCode Status, string? Reason)
{
    public bool IsGood => !Status.IsBad;
}
