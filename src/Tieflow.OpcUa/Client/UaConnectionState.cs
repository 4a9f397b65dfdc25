namespace Tieflow.OpcUa.Client;

/// <summary>State of a <see cref="UaClient"/>'s connection.</summary>
public enum UaConnectionState
{
    /// <summary>Not connected yet, or closed by the caller.</summary>
    Disconnected = 0,

    /// <summary>First connection in progress.</summary>
    Connecting = 1,

    /// <summary>Session active; requests and notifications flow.</summary>
    Connected = 2,

    /// <summary>The connection was lost; the client is reconnecting with backoff.</summary>
    Reconnecting = 3,
}
