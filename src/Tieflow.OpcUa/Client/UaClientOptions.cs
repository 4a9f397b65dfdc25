using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Client;

/// <summary>Settings of a <see cref="UaClient"/>. Durations are <see cref="TimeSpan"/>s; defaults suit a plant server on a LAN.</summary>
public sealed record UaClientOptions
{
    /// <summary>The server's endpoint URL (<c>opc.tcp://host:port/path</c>). The client always dials this URL, whatever the server advertises.</summary>
    public required Uri EndpointUrl { get; init; }

    /// <summary>Who to log in as (default anonymous).</summary>
    public UaUserIdentity Identity { get; init; } = UaUserIdentity.Anonymous;

    /// <summary>
    /// The security to use: a mode, optionally with a policy (see <see cref="UaSecurity.Parse"/>). Null (the default):
    /// the most secure endpoint the server offers and Tieflow supports; None only when the server offers nothing
    /// secured, and then reported through <see cref="UaClient.StateChanged"/>. A secured connection never falls back to None.
    /// </summary>
    public UaSecurity? Security { get; init; }

    /// <summary>
    /// The certificate store: Tieflow's own certificate (created on first use) and the trusted server certificates.
    /// Required for a secured connection; an untrusted server certificate is copied to its rejected folder and the
    /// connection fails with <see cref="UaCertificateException"/> (BadCertificateUntrusted).
    /// </summary>
    public UaCertificateStore? CertificateStore { get; init; }

    /// <summary>The client's application URI sent in CreateSession and put in its certificate (default <c>urn:tieflow:client</c>).</summary>
    public string ApplicationUri { get; init; } = "urn:tieflow:client";

    /// <summary>The client's application name (default <c>Tieflow</c>).</summary>
    public string ApplicationName { get; init; } = "Tieflow";

    /// <summary>The session name shown by the server (default <c>Tieflow</c>).</summary>
    public string SessionName { get; init; } = "Tieflow";

    /// <summary>Time allowed for each service call before it fails with BadRequestTimeout (default 10 s).</summary>
    public TimeSpan RequestTimeout { get; init; } = TimeSpan.FromSeconds(10);

    /// <summary>Time allowed to open the TCP connection (default 5 s).</summary>
    public TimeSpan ConnectTimeout { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>Requested session timeout (default 60 s).</summary>
    public TimeSpan SessionTimeout { get; init; } = TimeSpan.FromSeconds(60);

    /// <summary>Requested secure channel token lifetime (default 10 min; renewed at 75 %).</summary>
    public TimeSpan TokenLifetime { get; init; } = TimeSpan.FromMinutes(10);

    /// <summary>UA TCP sizes (default 64 KiB buffers, 16 MiB messages, 256 chunks).</summary>
    public TransportLimits Transport { get; init; } = TransportLimits.Default;

    /// <summary>First delay between reconnect attempts, doubled up to <see cref="ReconnectMaxDelay"/> (default 0.5 s).</summary>
    public TimeSpan ReconnectMinDelay { get; init; } = TimeSpan.FromMilliseconds(500);

    /// <summary>Longest delay between reconnect attempts (default 5 s).</summary>
    public TimeSpan ReconnectMaxDelay { get; init; } = TimeSpan.FromSeconds(5);

    /// <summary>Publish requests kept outstanding per session (default 3; lowered when the server answers BadTooManyPublishRequests).</summary>
    public int PublishRequestCount { get; init; } = 3;

    /// <summary>Margin added to the keep-alive period before a silent server is declared lost (default 2 s).</summary>
    public TimeSpan KeepAliveMargin { get; init; } = TimeSpan.FromSeconds(2);

    /// <summary>Checks the values and names the first wrong one.</summary>
    /// <exception cref="ArgumentException">A value is out of range.</exception>
    public void Validate()
    {
        if (!string.Equals(EndpointUrl.Scheme, "opc.tcp", StringComparison.OrdinalIgnoreCase))
        {
            throw new ArgumentException($"UaClientOptions.EndpointUrl '{EndpointUrl}' must be an opc.tcp:// URL.");
        }

        Check(RequestTimeout, nameof(RequestTimeout));
        Check(ConnectTimeout, nameof(ConnectTimeout));
        Check(SessionTimeout, nameof(SessionTimeout));
        Check(TokenLifetime, nameof(TokenLifetime));
        Check(ReconnectMinDelay, nameof(ReconnectMinDelay));
        if (ReconnectMaxDelay < ReconnectMinDelay)
        {
            throw new ArgumentException($"UaClientOptions.ReconnectMaxDelay ({ReconnectMaxDelay}) must be at least ReconnectMinDelay ({ReconnectMinDelay}).");
        }

        if (PublishRequestCount is < 1 or > 20)
        {
            throw new ArgumentException($"UaClientOptions.PublishRequestCount is {PublishRequestCount}; expected 1 to 20.");
        }

        Transport.Validate();
    }

    private static void Check(TimeSpan value, string name)
    {
        if (value <= TimeSpan.Zero)
        {
            throw new ArgumentException($"UaClientOptions.{name} is {value}; expected a positive duration.");
        }
    }
}
