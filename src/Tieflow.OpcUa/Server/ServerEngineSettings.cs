namespace Tieflow.OpcUa.Server;

/// <summary>What the engine needs from the public options, validated.</summary>
internal sealed class ServerEngineSettings
{
    public required string ApplicationUri { get; init; }

    public required string ApplicationName { get; init; }

    public required string ProductUri { get; init; }

    public required string NamespaceUri { get; init; }

    /// <summary>Path after host:port in endpoint URLs ("" or "/sim").</summary>
    public required string ResourcePath { get; init; }

    /// <summary>Host name used in endpoint URLs when the client's URL does not name one of ours.</summary>
    public required string DefaultHost { get; init; }

    /// <summary>User names and passwords accepted in clear on the None channel; empty: anonymous only.</summary>
    public required IReadOnlyDictionary<string, string> Users { get; init; }

    public double MinPublishingIntervalMs { get; init; } = 50;

    public double MinSamplingIntervalMs { get; init; } = 50;

    public int MaxSessions { get; init; } = 20;

    public int MaxSubscriptionsPerSession { get; init; } = 10;

    public int MaxParkedPublishPerSession { get; init; } = 20;

    public uint MaxQueueSize { get; init; } = 1000;

    public int MaxContinuationPointsPerSession { get; init; } = 10;

    public int MaxMessageSize { get; init; } = 16 * 1024 * 1024;

    /// <summary>Certificate, endpoints and client certificate checks; null: SecurityPolicy None only.</summary>
    public Tieflow.OpcUa.Security.UaServerSecurityOptions? Security { get; init; }
}
