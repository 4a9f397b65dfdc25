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
}
