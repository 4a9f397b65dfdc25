using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Transport;

/// <summary>
/// The only requests the client may send. Tieflow is read-only towards the plant: Write, Call and every other
/// service that changes the plant are absent, and <see cref="ClientSecureChannel"/> refuses anything not listed.
/// </summary>
internal static class ClientServices
{
    public static IReadOnlySet<uint> AllowedRequestIds { get; } = new HashSet<uint>
    {
        OpenSecureChannelRequest.EncodingId,
        CloseSecureChannelRequest.EncodingId,
        FindServersRequest.EncodingId,
        GetEndpointsRequest.EncodingId,
        CreateSessionRequest.EncodingId,
        ActivateSessionRequest.EncodingId,
        CloseSessionRequest.EncodingId,
        BrowseRequest.EncodingId,
        BrowseNextRequest.EncodingId,
        TranslateBrowsePathsToNodeIdsRequest.EncodingId,
        ReadRequest.EncodingId,
        CreateSubscriptionRequest.EncodingId,
        ModifySubscriptionRequest.EncodingId,
        DeleteSubscriptionsRequest.EncodingId,
        CreateMonitoredItemsRequest.EncodingId,
        ModifyMonitoredItemsRequest.EncodingId,
        DeleteMonitoredItemsRequest.EncodingId,
        PublishRequest.EncodingId,
        RepublishRequest.EncodingId,
        TransferSubscriptionsRequest.EncodingId,
    };
}
