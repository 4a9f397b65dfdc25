using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// A NotificationMessage before encoding: data changes (client handle and value), or a subscription status change,
/// or nothing for a keep-alive (whose sequence number is the one the next data message will carry).
/// </summary>
internal sealed record NotificationMessageData(
    uint SequenceNumber,
    DateTime PublishTime,
    IReadOnlyList<(uint ClientHandle, DataValue Value)> DataChanges,
    StatusCode? StatusChange)
{
    public bool IsKeepAlive => DataChanges.Count == 0 && StatusChange is null;
}
