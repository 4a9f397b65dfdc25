namespace Tieflow.Service.Settings;

/// <summary>Settings section <c>Tieflow:Source</c>: where the readings come from.</summary>
internal sealed class SourceOptions
{
    /// <summary>The section's key path.</summary>
    public const string Section = "Tieflow:Source";

    /// <summary>Kind of the OPC UA source.</summary>
    public const string OpcUa = "opcua";

    /// <summary>Kind of the in-process simulator source.</summary>
    public const string Simulator = "simulator";

    /// <summary><c>Kind</c>: <c>opcua</c> or <c>simulator</c>.</summary>
    public string? Kind { get; set; }

    /// <summary><c>Endpoint</c>: the plant's OPC UA endpoint URL (opcua).</summary>
    public string? Endpoint { get; set; }

    /// <summary><c>User</c>: OPC UA user name (opcua); the password comes from the environment variable <c>TIEFLOW_OPCUA_PASSWORD</c>.</summary>
    public string? User { get; set; }

    /// <summary><c>Security</c>: <c>MODE[:POLICY]</c> (opcua); the most secure offered when absent.</summary>
    public string? Security { get; set; }

    /// <summary><c>Pki</c>: the certificate store folder (opcua).</summary>
    public string? Pki { get; set; }

    /// <summary><c>Scenario</c>: the scenario file to simulate (simulator).</summary>
    public string? Scenario { get; set; }

    /// <summary><c>Speed</c>: how many times faster than real time the simulated plant runs (simulator), above 0; default 1.</summary>
    public double? Speed { get; set; }

    /// <summary>OPC UA: how often the server samples each node (duration text; default 1 s).</summary>
    public string? SamplingInterval { get; set; }

    /// <summary>OPC UA: how often the server sends what changed (duration text; default 1 s).</summary>
    public string? PublishingInterval { get; set; }

    /// <summary>OPC UA: the longest silence the server may keep when nothing changes (duration text; default 5 s).</summary>
    public string? KeepAliveInterval { get; set; }

    /// <summary>OPC UA: first wait between attempts of the first connection, doubled after each failure (duration text; default 1 s).</summary>
    public string? ConnectRetryDelay { get; set; }

    /// <summary>OPC UA: the longest of those waits (duration text; default 30 s).</summary>
    public string? ConnectRetryMaxDelay { get; set; }

    /// <summary>OPC UA: attempts of the first connection before giving up with exit 3 (0 or absent: keep trying).</summary>
    public int? ConnectAttempts { get; set; }

    /// <summary>OPC UA: refuse to start when any instrument's node is missing on the server (default false: start degraded).</summary>
    public bool? RequireAllNodes { get; set; }
}
