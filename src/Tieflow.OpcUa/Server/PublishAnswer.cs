using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <summary>The content of a PublishResponse before encoding.</summary>
internal sealed record PublishAnswer(
    uint SubscriptionId,
    uint[] AvailableSequenceNumbers,
    bool MoreNotifications,
    NotificationMessageData Message,
    StatusCode[] AcknowledgementResults);
