using System.Net;
using Tieflow.OpcUa.Security;

namespace Tieflow.OpcUa.Server;

/// <summary>Settings of a <see cref="UaServer"/>; the defaults suit tests and the plant simulator on loopback.</summary>
public sealed class UaServerOptions
{
    /// <summary>Address to listen on (default <see cref="IPAddress.Loopback"/>, 127.0.0.1).</summary>
    public IPAddress ListenAddress { get; init; } = IPAddress.Loopback;

    /// <summary>TCP port, 0 (the default) to let the system pick a free one (see <see cref="UaServer.Port"/>).</summary>
    public int Port { get; init; }

    /// <summary>Path after host:port in the endpoint URL, "" (default) or starting with '/', e.g. "/sim".</summary>
    public string ResourcePath { get; init; } = string.Empty;

    /// <summary>The server's ApplicationUri (namespace index 1).</summary>
    public string ApplicationUri { get; init; } = "urn:tieflow:opcua-server";

    /// <summary>The server's application name as generic clients show it.</summary>
    public string ApplicationName { get; init; } = "Tieflow OPC UA server";

    /// <summary>The product URI reported in ServerStatus.BuildInfo and the application description.</summary>
    public string ProductUri { get; init; } = "urn:tieflow";

    /// <summary>The namespace of the nodes added through the API (namespace index 2).</summary>
    public string NamespaceUri { get; init; } = "urn:tieflow:plant";

    /// <summary>
    /// User names and passwords accepted. Without <see cref="Security"/> they travel in clear on the None endpoint
    /// (tests only); with it every endpoint asks for the password encrypted with the server's certificate. Empty (the
    /// default): anonymous users only.
    /// </summary>
    public IReadOnlyDictionary<string, string> Users { get; init; } = new Dictionary<string, string>();

    /// <summary>Certificate and secured endpoints (see <see cref="UaServerSecurityOptions.FromStore"/>); null (the default): SecurityPolicy None only.</summary>
    public UaServerSecurityOptions? Security { get; init; }

    /// <summary>Fastest publishing interval granted (default 50 ms).</summary>
    public TimeSpan MinPublishingInterval { get; init; } = TimeSpan.FromMilliseconds(50);

    /// <summary>Fastest sampling interval granted (default 50 ms).</summary>
    public TimeSpan MinSamplingInterval { get; init; } = TimeSpan.FromMilliseconds(50);

    /// <summary>Most concurrent sessions (default 20).</summary>
    public int MaxSessions { get; init; } = 20;

    /// <summary>Most concurrent TCP connections (default 100); more are refused with ERR Bad_TcpServerTooBusy.</summary>
    public int MaxConnections { get; init; } = 100;

    /// <summary>Largest chunk the server receives and sends, in bytes (default 65536, at least 8192).</summary>
    public int BufferSize { get; init; } = 65536;

    /// <summary>Largest message in bytes (default 16 MiB).</summary>
    public int MaxMessageSize { get; init; } = 16 * 1024 * 1024;

    /// <summary>Most chunks in one message (default 256).</summary>
    public int MaxChunkCount { get; init; } = 256;
}
