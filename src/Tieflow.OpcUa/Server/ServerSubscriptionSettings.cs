namespace Tieflow.OpcUa.Server;

/// <summary>The revised parameters of a subscription.</summary>
/// <param name="PublishingIntervalMs">Revised publishing interval in milliseconds.</param>
/// <param name="LifetimeCount">Publishing cycles without a Publish request before the subscription expires (at least 3 x keep-alive).</param>
/// <param name="MaxKeepAliveCount">Empty publishing cycles before a keep-alive is sent.</param>
/// <param name="MaxNotificationsPerPublish">Most notifications in one message (0: no limit).</param>
/// <param name="Priority">Relative priority among the session's subscriptions.</param>
internal sealed record ServerSubscriptionSettings(
    double PublishingIntervalMs,
    uint LifetimeCount,
    uint MaxKeepAliveCount,
    uint MaxNotificationsPerPublish,
    byte Priority);
