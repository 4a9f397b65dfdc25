namespace Tieflow.OpcUa.Transport;

/// <summary>Settings of one client secure channel.</summary>
internal sealed record ClientChannelSettings
{
    public required Uri EndpointUrl { get; init; }

    public TransportLimits Limits { get; init; } = TransportLimits.Default;

    public TimeSpan ConnectTimeout { get; init; } = TimeSpan.FromSeconds(5);

    public TimeSpan RequestedTokenLifetime { get; init; } = TimeSpan.FromMinutes(10);

    /// <summary>Time allowed for OpenSecureChannel and CloseSecureChannel.</summary>
    public TimeSpan ChannelRequestTimeout { get; init; } = TimeSpan.FromSeconds(10);
}
