using System.Security.Cryptography.X509Certificates;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;

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

    /// <summary>The security policy, null for None.</summary>
    public SecurityPolicy? Policy { get; init; }

    public MessageSecurityMode Mode { get; init; } = MessageSecurityMode.None;

    /// <summary>Our application instance certificate with its private key (required with a policy).</summary>
    public X509Certificate2? OwnCertificate { get; init; }

    /// <summary>The server's certificate from its endpoint description (required with a policy).</summary>
    public X509Certificate2? ServerCertificate { get; init; }
}
