namespace Tieflow.Service.Hosting;

/// <summary>
/// The key paths of Tieflow's settings (section <c>Tieflow</c> of <c>appsettings.json</c>, environment variables
/// <c>TIEFLOW__Source__Endpoint</c>, command line): one list that the host's binding and validation, the deployment
/// files and their tests all use, so that a key cannot be spelled two ways.
/// </summary>
internal static class SettingsKeys
{
    /// <summary>The section every key lives in.</summary>
    public const string Section = "Tieflow";

    /// <summary>The plant file.</summary>
    public const string Plant = "Tieflow:Plant";

    /// <summary>The source section (<see cref="SourceKind"/> and the keys of that kind).</summary>
    public const string Source = "Tieflow:Source";

    /// <summary>Where samples come from: <c>opcua</c> or <c>simulator</c>.</summary>
    public const string SourceKind = "Tieflow:Source:Kind";

    /// <summary>OPC UA: the server's endpoint URL (<c>opc.tcp://host:port/path</c>).</summary>
    public const string SourceEndpoint = "Tieflow:Source:Endpoint";

    /// <summary>OPC UA: the user name; the password is in <see cref="OpcUaPasswordVariable"/>.</summary>
    public const string SourceUser = "Tieflow:Source:User";

    /// <summary>OPC UA: <c>MODE[:POLICY]</c>; without it the most secure endpoint offered.</summary>
    public const string SourceSecurity = "Tieflow:Source:Security";

    /// <summary>OPC UA: the certificate store folder.</summary>
    public const string SourcePki = "Tieflow:Source:Pki";

    /// <summary>OPC UA: how often the server samples each node.</summary>
    public const string SourceSamplingInterval = "Tieflow:Source:SamplingInterval";

    /// <summary>OPC UA: how often the server sends what changed.</summary>
    public const string SourcePublishingInterval = "Tieflow:Source:PublishingInterval";

    /// <summary>OPC UA: longest silence (no data, no keep-alive) the server is asked to keep.</summary>
    public const string SourceKeepAliveInterval = "Tieflow:Source:KeepAliveInterval";

    /// <summary>OPC UA: first delay between attempts of the first connection.</summary>
    public const string SourceConnectRetryDelay = "Tieflow:Source:ConnectRetryDelay";

    /// <summary>OPC UA: longest delay between attempts of the first connection.</summary>
    public const string SourceConnectRetryMaxDelay = "Tieflow:Source:ConnectRetryMaxDelay";

    /// <summary>OPC UA: attempts of the first connection before giving up (0: keep trying).</summary>
    public const string SourceConnectAttempts = "Tieflow:Source:ConnectAttempts";

    /// <summary>OPC UA: true to refuse to start when any instrument's node is missing on the server.</summary>
    public const string SourceRequireAllNodes = "Tieflow:Source:RequireAllNodes";

    /// <summary>Simulator: the scenario file.</summary>
    public const string SourceScenario = "Tieflow:Source:Scenario";

    /// <summary>Simulator: simulated seconds per wall-clock second.</summary>
    public const string SourceSpeed = "Tieflow:Source:Speed";

    /// <summary>The lab section.</summary>
    public const string Labs = "Tieflow:Labs";

    /// <summary>A drop folder of lab CSV files.</summary>
    public const string LabsFolder = "Tieflow:Labs:Folder";

    /// <summary>How often the drop folder is looked at.</summary>
    public const string LabsPollInterval = "Tieflow:Labs:PollInterval";

    /// <summary>How long a file's size and time must stay the same before it counts as complete.</summary>
    public const string LabsSettleTime = "Tieflow:Labs:SettleTime";

    /// <summary>The store section.</summary>
    public const string Store = "Tieflow:Store";

    /// <summary>Where records go: <c>sqlite</c> or <c>influxdb</c>.</summary>
    public const string StoreKind = "Tieflow:Store:Kind";

    /// <summary>SQLite: the database file.</summary>
    public const string StorePath = "Tieflow:Store:Path";

    /// <summary>InfluxDB: the server URL.</summary>
    public const string StoreUrl = "Tieflow:Store:Url";

    /// <summary>InfluxDB: the organisation.</summary>
    public const string StoreOrg = "Tieflow:Store:Org";

    /// <summary>InfluxDB: the bucket.</summary>
    public const string StoreBucket = "Tieflow:Store:Bucket";

    /// <summary>InfluxDB: the SQLite outbox file that holds points until the server has them.</summary>
    public const string StoreOutboxPath = "Tieflow:Store:OutboxPath";

    /// <summary>InfluxDB: the most bytes the outbox may hold.</summary>
    public const string StoreOutboxMaxBytes = "Tieflow:Store:OutboxMaxBytes";

    /// <summary>InfluxDB: compress the write requests (gzip).</summary>
    public const string StoreGzip = "Tieflow:Store:Gzip";

    /// <summary>Also store the validated samples (<c>tieflow_signal</c>).</summary>
    public const string StoreWriteSignals = "Tieflow:Store:WriteSignals";

    /// <summary>Environment variable with the OPC UA user's password (never a setting, never logged).</summary>
    public const string OpcUaPasswordVariable = "TIEFLOW_OPCUA_PASSWORD";

    /// <summary>Environment variable with the InfluxDB token (never a setting, never logged).</summary>
    public const string InfluxTokenVariable = "TIEFLOW_INFLUX_TOKEN";

    /// <summary>Every key that holds a value (sections excluded).</summary>
    public static IReadOnlyList<string> All { get; } =
    [
        Plant,
        SourceKind, SourceEndpoint, SourceUser, SourceSecurity, SourcePki, SourceSamplingInterval, SourcePublishingInterval,
        SourceKeepAliveInterval, SourceConnectRetryDelay, SourceConnectRetryMaxDelay, SourceConnectAttempts, SourceRequireAllNodes,
        SourceScenario, SourceSpeed,
        LabsFolder, LabsPollInterval, LabsSettleTime,
        StoreKind, StorePath, StoreUrl, StoreOrg, StoreBucket, StoreOutboxPath, StoreOutboxMaxBytes, StoreGzip, StoreWriteSignals,
    ];

    /// <summary>Environment variables that carry secrets rather than settings.</summary>
    public static IReadOnlyList<string> SecretVariables { get; } = [OpcUaPasswordVariable, InfluxTokenVariable];

    /// <summary>The environment variable of a key (<c>Tieflow:Source:Endpoint</c> gives <c>TIEFLOW__Source__Endpoint</c>).</summary>
    public static string EnvironmentVariable(string key)
    {
        ArgumentException.ThrowIfNullOrEmpty(key);
        string[] parts = key.Split(':');
        parts[0] = parts[0].ToUpperInvariant();
        return string.Join("__", parts);
    }

    /// <summary>The key of an environment variable (<c>TIEFLOW__Source__Endpoint</c> gives <c>Tieflow:Source:Endpoint</c>), or null when it names no known key; case does not matter, as in the host's configuration.</summary>
    public static string? FromEnvironmentVariable(string variable)
    {
        ArgumentNullException.ThrowIfNull(variable);
        string path = variable.Replace("__", ":", StringComparison.Ordinal);
        return All.FirstOrDefault(k => string.Equals(k, path, StringComparison.OrdinalIgnoreCase));
    }
}
