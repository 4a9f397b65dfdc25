namespace Tieflow.OpcUa.Client;

/// <summary>Requested subscription parameters; the server revises them and the client uses the revised values.</summary>
public sealed record SubscriptionSettings
{
    /// <summary>Requested publishing interval (default 1 s).</summary>
    public TimeSpan PublishingInterval { get; init; } = TimeSpan.FromSeconds(1);

    /// <summary>Publishing intervals without data after which the server sends a keep-alive (default 5).</summary>
    public uint MaxKeepAliveCount { get; init; } = 5;

    /// <summary>Publishing intervals without a Publish request after which the server drops the subscription (default 60; at least 3 × keep-alive).</summary>
    public uint LifetimeCount { get; init; } = 60;

    /// <summary>Most notifications per Publish response; 0 = no limit (default).</summary>
    public uint MaxNotificationsPerPublish { get; init; }

    /// <summary>Relative priority (default 0).</summary>
    public byte Priority { get; init; }

    /// <summary>Most events waiting on <see cref="UaSubscription.Events"/> (default 100 000); beyond it the oldest are dropped and reported as a gap.</summary>
    public int EventQueueCapacity { get; init; } = 100_000;

    /// <summary>Timestamps the server returns (default Both).</summary>
    public Encoding.TimestampsToReturn Timestamps { get; init; } = Encoding.TimestampsToReturn.Both;
}
